using System;
using System.Threading;

namespace OnlineRidge.Cli
{
    /// <summary>Entry point of the ridgefit tool.</summary>
    internal static class Program
    {
        private static int Main(string[] args)
        {
            using var cancel = new CancellationTokenSource();
            Console.CancelKeyPress += (_, e) =>
            {
                // First Ctrl+C stops reading at the next block of rows and removes the temporary outputs.
                e.Cancel = true;
                cancel.Cancel();
            };

            return CliApp.Run(args, Console.Out, Console.Error, stderrIsTerminal: !Console.IsErrorRedirected, cancel.Token);
        }
    }
}

using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Text;
using System.Text.Json;

namespace OnlineRidge.Cli.Tests
{
    /// <summary>Runs the tool in process on files in a fresh temporary folder and reads its outputs back.</summary>
    public sealed class CliHarness : IDisposable
    {
        private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

        public CliHarness()
        {
            Folder = Path.Combine(Path.GetTempPath(), "ridgefit-tests-" + Guid.NewGuid().ToString("N"));
            Directory.CreateDirectory(Folder);
        }

        public string Folder { get; }

        public string PathOf(string name) => Path.Combine(Folder, name);

        public static (int Exit, string Out, string Err) Run(params string[] args)
        {
            var stdout = new StringWriter(Inv);
            var stderr = new StringWriter(Inv);
            int exit = CliApp.Run(args, stdout, stderr);
            return (exit, stdout.ToString(), stderr.ToString());
        }

        /// <summary>Writes a CSV file: header, then rows with round-trip formatting (so the tool parses back exactly these doubles).</summary>
        public string WriteCsv(string name, string[] header, IEnumerable<double[]> rows)
        {
            string path = PathOf(name);
            using var w = new StreamWriter(path, false, new UTF8Encoding(false));
            w.WriteLine(string.Join(",", header));
            foreach (var r in rows)
            {
                w.WriteLine(string.Join(",", r.Select(v => v.ToString("R", Inv))));
            }

            return path;
        }

        public string WriteText(string name, string text)
        {
            string path = PathOf(name);
            File.WriteAllText(path, text);
            return path;
        }

        /// <summary>The estimate CSV as term → (estimate, std error, lower, upper, vif); empty fields are NaN.</summary>
        public static Dictionary<string, double[]> ReadEstimateCsv(string path)
        {
            var lines = File.ReadAllLines(path);
            if (lines[0] != "term,estimate,std_error,lower,upper,vif")
            {
                throw new InvalidDataException(lines[0]);
            }

            return lines.Skip(1).Select(l => l.Split(',')).ToDictionary(
                f => f[0],
                f => f.Skip(1).Select(s => s.Length == 0 ? double.NaN : double.Parse(s, Inv)).ToArray());
        }

        public static JsonElement ReadJson(string path) => JsonDocument.Parse(File.ReadAllText(path)).RootElement.Clone();

        /// <summary>Names of all files in the folder (including hidden temporaries).</summary>
        public string[] Files() => Directory.GetFiles(Folder).Select(Path.GetFileName).Select(f => f!).OrderBy(f => f, StringComparer.Ordinal).ToArray();

        /// <summary>Standard normal by Box–Muller.</summary>
        public static double Gauss(Random rng) => Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());

        public void Dispose()
        {
            try
            {
                Directory.Delete(Folder, recursive: true);
            }
            catch (IOException)
            {
            }
        }
    }
}

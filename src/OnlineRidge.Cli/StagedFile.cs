using System;
using System.Collections.Generic;
using System.IO;
using System.Text;

namespace OnlineRidge.Cli
{
    /// <summary>
    /// An output file written to a temporary file in the same folder and moved over the final name only on <see cref="StagedOutputs.CommitAll"/>,
    /// so a reader never sees a half-written file and a failed run leaves nothing behind (a rename within one folder is atomic on POSIX and NTFS).
    /// </summary>
    internal sealed class StagedFile : IDisposable
    {
        private readonly StreamWriter? writer;

        /// <param name="finalPath">Where the file ends up.</param>
        /// <param name="open">False to only reserve the temporary path (keeping the extension) for a library that writes files itself.</param>
        public StagedFile(string finalPath, bool open = true)
        {
            FinalPath = Path.GetFullPath(finalPath);
            string folder = Path.GetDirectoryName(FinalPath) ?? ".";
            if (!Directory.Exists(folder))
            {
                throw new UsageException($"the output folder '{folder}' does not exist.");
            }

            TempPath = Path.Combine(folder, "." + Path.GetFileName(FinalPath) + "." + Guid.NewGuid().ToString("N").Substring(0, 12) + ".tmp" + Path.GetExtension(FinalPath));
            if (!open)
            {
                return;
            }

            writer = new StreamWriter(new FileStream(TempPath, FileMode.CreateNew, FileAccess.Write, FileShare.None, 1 << 16), new UTF8Encoding(false), 1 << 16);
            writer.NewLine = "\n";
        }

        public string FinalPath { get; }

        public string TempPath { get; }

        public TextWriter Writer => writer ?? throw new InvalidOperationException("reserved path only");

        public Stream BaseStream
        {
            get
            {
                Writer.Flush();
                return writer!.BaseStream;
            }
        }

        public void Close() => writer?.Dispose();

        public void Dispose() => writer?.Dispose();
    }

    /// <summary>The set of outputs of one run: committed together at the end, or all deleted.</summary>
    internal sealed class StagedOutputs : IDisposable
    {
        private readonly List<StagedFile> files = new();
        private bool committed;

        public StagedFile Add(string finalPath, bool open = true)
        {
            var f = new StagedFile(finalPath, open);
            files.Add(f);
            return f;
        }

        public IEnumerable<string> FinalPaths
        {
            get
            {
                foreach (var f in files)
                {
                    yield return f.FinalPath;
                }
            }
        }

        public void CommitAll()
        {
            foreach (var f in files)
            {
                f.Close();
            }

            foreach (var f in files)
            {
                if (!File.Exists(f.TempPath))
                {
                    throw new IOException($"the output '{f.FinalPath}' was not produced.");
                }
            }

            foreach (var f in files)
            {
                File.Move(f.TempPath, f.FinalPath, overwrite: true);
            }

            committed = true;
        }

        public void Dispose()
        {
            if (committed)
            {
                return;
            }

            foreach (var f in files)
            {
                try
                {
                    f.Close();
                    if (File.Exists(f.TempPath))
                    {
                        File.Delete(f.TempPath);
                    }
                }
                catch (IOException)
                {
                    // Best effort: a temporary file that cannot be removed is hidden (dot name) and never has the final name.
                }
                catch (UnauthorizedAccessException)
                {
                }
            }
        }
    }
}

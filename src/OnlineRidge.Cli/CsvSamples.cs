using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using nietras.SeparatedValues;

namespace OnlineRidge.Cli
{
    /// <summary>Malformed input data; reported with exit code 2, naming the line and column where known.</summary>
    internal sealed class DataException : Exception
    {
        public DataException(string message)
            : base(message)
        {
        }
    }

    /// <summary>
    /// Streams the selected numeric columns of a CSV file with a header row, one row at a time, through the Sep parser (constant memory:
    /// its buffer holds a few rows). Every field is checked: a non-number, a non-finite value or a row with another number of fields than
    /// the header is reported with its line and column.
    /// </summary>
    internal sealed class CsvSamples : IDisposable
    {
        private readonly SepReader reader;
        private readonly Stream? stream;
        private readonly int[] indices;
        private readonly string[] names;
        private readonly int headerCount;
        private readonly string source;

        public CsvSamples(string path, char separator, IReadOnlyList<string> columns)
        {
            source = path == "-" ? "<stdin>" : path;
            var options = new SepReaderOptions(Sep.New(separator)) with { DisableColCountCheck = true, Unescape = true, Trim = SepTrim.Outer };
            try
            {
                stream = path == "-" ? Console.OpenStandardInput() : new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16, FileOptions.SequentialScan);
                TotalBytes = path == "-" ? -1 : stream.Length;
                reader = options.From(stream);
            }
            catch (FileNotFoundException)
            {
                stream?.Dispose();
                throw new UsageException($"the data file '{path}' does not exist.");
            }
            catch (DirectoryNotFoundException)
            {
                stream?.Dispose();
                throw new UsageException($"the data file '{path}' does not exist.");
            }
            catch (ArgumentException e)
            {
                // Sep rejects a header that names a column twice.
                stream?.Dispose();
                throw new DataException($"{source} line 1: {e.Message}");
            }

            if (reader.Header.IsEmpty)
            {
                Dispose();
                throw new DataException($"{source} line 1: the file is empty; a header row with the column names is required.");
            }

            var header = reader.Header.ColNames;
            headerCount = header.Count;
            names = new string[columns.Count];
            indices = new int[columns.Count];
            for (int c = 0; c < columns.Count; c++)
            {
                names[c] = columns[c];
                if (!reader.Header.TryIndexOf(columns[c], out indices[c]))
                {
                    Dispose();
                    throw new DataException($"{source} line 1: column '{columns[c]}' is not in the header; the columns are: {string.Join(", ", header)}.");
                }
            }
        }

        /// <summary>File length in bytes, or −1 for standard input.</summary>
        public long TotalBytes { get; }

        /// <summary>Bytes consumed by the parser so far (it reads ahead by one buffer).</summary>
        public long Position => stream is { CanSeek: true } ? stream.Position : -1;

        /// <summary>Line number (1-based; the header is line 1) of the row last returned.</summary>
        public int Line { get; private set; }

        public string Source => source;

        /// <summary>Reads the next row into <paramref name="values"/> (the selected columns, in order); false at the end of the file.</summary>
        public bool Next(Span<double> values)
        {
            while (MoveNext())
            {
                var row = reader.Current;
                Line = row.LineNumberFrom;
                if (row.ColCount == 1 && row.Span.Trim().Length == 0)
                {
                    continue; // blank line
                }

                if (row.ColCount != headerCount)
                {
                    throw new DataException($"{source} line {Line}: the row has {row.ColCount} fields, the header has {headerCount}.");
                }

                for (int c = 0; c < indices.Length; c++)
                {
                    ReadOnlySpan<char> field = row[indices[c]].Span;
                    if (!double.TryParse(field, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) || !double.IsFinite(v))
                    {
                        throw new DataException($"{source} line {Line}, column '{names[c]}' (field {indices[c] + 1}): '{Shown(field)}' is not a finite number.");
                    }

                    values[c] = v;
                }

                return true;
            }

            return false;
        }

        /// <summary>A field as shown in a message: line breaks escaped, at most 40 characters.</summary>
        private static string Shown(ReadOnlySpan<char> field)
        {
            string text = field.Length > 40 ? field.Slice(0, 40).ToString() + "…" : field.ToString();
            return text.Replace("\r", "\\r", StringComparison.Ordinal).Replace("\n", "\\n", StringComparison.Ordinal);
        }

        private bool MoveNext()
        {
            try
            {
                return reader.MoveNext();
            }
            catch (InvalidDataException e)
            {
                throw new DataException($"{source} after line {Line}: {e.Message}");
            }
        }

        public void Dispose()
        {
            reader?.Dispose();
            stream?.Dispose();
        }
    }
}

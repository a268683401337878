using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Text;
using System.Text.Json;

namespace OnlineRidge.Persistence
{
    /// <summary>
    /// Encodes a <see cref="StateRecord"/> as binary or JSON and decodes either (detected from the first byte). Our own format:
    /// <list type="bullet">
    /// <item>Binary (little-endian): the 8 bytes "ORSNAP\r\n", format version (uint16), kind (UTF-8, uint16 length), kind version (int32),
    /// entry count (int32), entries (name, type tag, payload), then the CRC-32 (IEEE 802.3 polynomial) of every preceding byte.</item>
    /// <item>JSON: {"format":"OnlineRidge snapshot","formatVersion":1,"kind":…,"kindVersion":…,"entries":{name:{"type":…,"value":…}},
    /// "crc32":"xxxxxxxx"} where the checksum is that of the binary encoding of the same record, so both forms verify the same content.
    /// Doubles are written in shortest round-trip form (bit-exact); NaN and infinities as the strings "NaN", "Infinity", "-Infinity".</item>
    /// </list>
    /// </summary>
    internal static class SnapshotCodec
    {
        public const ushort FormatVersion = 1;
        private const string JsonFormatName = "OnlineRidge snapshot";
        private static readonly byte[] Magic = Encoding.ASCII.GetBytes("ORSNAP\r\n");

        private enum Tag : byte
        {
            Double = 1,
            Int64 = 2,
            Boolean = 3,
            String = 4,
            DoubleArray = 5,
        }

        public static void Write(StateRecord record, Stream destination, SnapshotEncoding encoding)
        {
            byte[] binary = EncodeBinary(record);
            if (encoding == SnapshotEncoding.Binary)
            {
                destination.Write(binary, 0, binary.Length);
                return;
            }

            uint crc = BitConverter.ToUInt32(binary, binary.Length - 4);
            using var writer = new Utf8JsonWriter(destination, new JsonWriterOptions { Indented = true });
            writer.WriteStartObject();
            writer.WriteString("format", JsonFormatName);
            writer.WriteNumber("formatVersion", FormatVersion);
            writer.WriteString("kind", record.Kind);
            writer.WriteNumber("kindVersion", record.KindVersion);
            writer.WriteStartObject("entries");
            foreach (var e in record.Entries)
            {
                writer.WriteStartObject(e.Key);
                switch (e.Value)
                {
                    case double d:
                        writer.WriteString("type", "double");
                        writer.WritePropertyName("value");
                        WriteDouble(writer, d);
                        break;
                    case long l:
                        writer.WriteString("type", "int64");
                        writer.WriteNumber("value", l);
                        break;
                    case bool b:
                        writer.WriteString("type", "bool");
                        writer.WriteBoolean("value", b);
                        break;
                    case string s:
                        writer.WriteString("type", "string");
                        writer.WriteString("value", s);
                        break;
                    case double[] a:
                        writer.WriteString("type", "double[]");
                        writer.WriteStartArray("value");
                        foreach (double v in a)
                        {
                            WriteDouble(writer, v);
                        }

                        writer.WriteEndArray();
                        break;
                    default:
                        throw new InvalidOperationException("unsupported snapshot entry type");
                }

                writer.WriteEndObject();
            }

            writer.WriteEndObject();
            writer.WriteString("crc32", crc.ToString("x8", CultureInfo.InvariantCulture));
            writer.WriteEndObject();
        }

        public static StateRecord Read(Stream source)
        {
            byte[] bytes;
            using (var ms = new MemoryStream())
            {
                source.CopyTo(ms);
                bytes = ms.ToArray();
            }

            if (bytes.Length == 0)
            {
                throw new SnapshotFormatException("the snapshot is empty");
            }

            int first = 0;
            while (first < bytes.Length && (bytes[first] == (byte)' ' || bytes[first] == (byte)'\t' || bytes[first] == (byte)'\r' || bytes[first] == (byte)'\n' || bytes[first] == 0xEF || bytes[first] == 0xBB || bytes[first] == 0xBF))
            {
                first++;
            }

            return first < bytes.Length && bytes[first] == (byte)'{' ? DecodeJson(bytes) : DecodeBinary(bytes);
        }

        private static void WriteDouble(Utf8JsonWriter writer, double d)
        {
            if (double.IsNaN(d))
            {
                writer.WriteStringValue("NaN");
            }
            else if (double.IsPositiveInfinity(d))
            {
                writer.WriteStringValue("Infinity");
            }
            else if (double.IsNegativeInfinity(d))
            {
                writer.WriteStringValue("-Infinity");
            }
            else
            {
                writer.WriteNumberValue(d);
            }
        }

        private static double ReadDouble(JsonElement e) => e.ValueKind switch
        {
            JsonValueKind.Number => e.GetDouble(),
            JsonValueKind.String => e.GetString() switch
            {
                "NaN" => double.NaN,
                "Infinity" => double.PositiveInfinity,
                "-Infinity" => double.NegativeInfinity,
                var s => throw new SnapshotFormatException("not a number: " + s),
            },
            _ => throw new SnapshotFormatException("expected a number, found " + e.ValueKind),
        };

        private static byte[] EncodeBinary(StateRecord record)
        {
            using var ms = new MemoryStream();
            using (var w = new BinaryWriter(ms, Encoding.UTF8, leaveOpen: true))
            {
                w.Write(Magic);
                w.Write(FormatVersion);
                WriteString(w, record.Kind);
                w.Write(record.KindVersion);
                w.Write(record.Entries.Count);
                foreach (var e in record.Entries)
                {
                    WriteString(w, e.Key);
                    switch (e.Value)
                    {
                        case double d:
                            w.Write((byte)Tag.Double);
                            w.Write(d);
                            break;
                        case long l:
                            w.Write((byte)Tag.Int64);
                            w.Write(l);
                            break;
                        case bool b:
                            w.Write((byte)Tag.Boolean);
                            w.Write(b);
                            break;
                        case string s:
                            w.Write((byte)Tag.String);
                            WriteString(w, s);
                            break;
                        case double[] a:
                            w.Write((byte)Tag.DoubleArray);
                            w.Write(a.Length);
                            foreach (double v in a)
                            {
                                w.Write(v);
                            }

                            break;
                        default:
                            throw new InvalidOperationException("unsupported snapshot entry type");
                    }
                }
            }

            uint crc = Crc32.Compute(ms.GetBuffer(), 0, (int)ms.Length);
            ms.Write(BitConverter.GetBytes(crc), 0, 4);
            return ms.ToArray();
        }

        private static StateRecord DecodeBinary(byte[] bytes)
        {
            if (bytes.Length < Magic.Length + 4)
            {
                throw new SnapshotFormatException("the data are too short to be a snapshot");
            }

            for (int i = 0; i < Magic.Length; i++)
            {
                if (bytes[i] != Magic[i])
                {
                    throw new SnapshotFormatException("the data do not start with the snapshot marker (not an OnlineRidge snapshot)");
                }
            }

            uint stored = BitConverter.ToUInt32(bytes, bytes.Length - 4);
            uint actual = Crc32.Compute(bytes, 0, bytes.Length - 4);
            if (stored != actual)
            {
                throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "checksum mismatch: stored {0:x8}, computed {1:x8} (the snapshot is corrupt or truncated)", stored, actual));
            }

            try
            {
                using var ms = new MemoryStream(bytes, Magic.Length, bytes.Length - Magic.Length - 4);
                using var r = new BinaryReader(ms, Encoding.UTF8);
                ushort version = r.ReadUInt16();
                if (version != FormatVersion)
                {
                    throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "snapshot format version {0} is not supported (this build reads {1})", version, FormatVersion));
                }

                var record = new StateRecord(ReadString(r), r.ReadInt32());
                int count = r.ReadInt32();
                if (count < 0 || count > 10_000)
                {
                    throw new SnapshotFormatException("implausible entry count " + count.ToString(CultureInfo.InvariantCulture));
                }

                for (int k = 0; k < count; k++)
                {
                    string name = ReadString(r);
                    var tag = (Tag)r.ReadByte();
                    switch (tag)
                    {
                        case Tag.Double:
                            record.Add(name, r.ReadDouble());
                            break;
                        case Tag.Int64:
                            record.Add(name, r.ReadInt64());
                            break;
                        case Tag.Boolean:
                            record.Add(name, r.ReadBoolean());
                            break;
                        case Tag.String:
                            record.Add(name, ReadString(r));
                            break;
                        case Tag.DoubleArray:
                            int n = r.ReadInt32();
                            if (n < 0 || (long)n * 8 > ms.Length - ms.Position)
                            {
                                throw new SnapshotFormatException("implausible array length " + n.ToString(CultureInfo.InvariantCulture));
                            }

                            var a = new double[n];
                            for (int i = 0; i < n; i++)
                            {
                                a[i] = r.ReadDouble();
                            }

                            record.AddEntry(name, a);
                            break;
                        default:
                            throw new SnapshotFormatException("unknown entry type " + ((byte)tag).ToString(CultureInfo.InvariantCulture));
                    }
                }

                if (ms.Position != ms.Length)
                {
                    throw new SnapshotFormatException("trailing bytes after the last entry");
                }

                return record;
            }
            catch (EndOfStreamException ex)
            {
                throw new SnapshotFormatException("the snapshot is truncated", ex);
            }
            catch (InvalidOperationException ex)
            {
                throw new SnapshotFormatException("malformed snapshot: " + ex.Message, ex);
            }
        }

        private static StateRecord DecodeJson(byte[] bytes)
        {
            try
            {
                using var doc = JsonDocument.Parse(bytes);
                JsonElement root = doc.RootElement;
                if (root.GetProperty("format").GetString() != JsonFormatName)
                {
                    throw new SnapshotFormatException("not an OnlineRidge snapshot (wrong \"format\")");
                }

                int version = root.GetProperty("formatVersion").GetInt32();
                if (version != FormatVersion)
                {
                    throw new SnapshotFormatException(string.Format(CultureInfo.InvariantCulture, "snapshot format version {0} is not supported (this build reads {1})", version, FormatVersion));
                }

                var record = new StateRecord(root.GetProperty("kind").GetString() ?? string.Empty, root.GetProperty("kindVersion").GetInt32());
                foreach (JsonProperty e in root.GetProperty("entries").EnumerateObject())
                {
                    JsonElement value = e.Value.GetProperty("value");
                    switch (e.Value.GetProperty("type").GetString())
                    {
                        case "double":
                            record.Add(e.Name, ReadDouble(value));
                            break;
                        case "int64":
                            record.Add(e.Name, value.GetInt64());
                            break;
                        case "bool":
                            record.Add(e.Name, value.GetBoolean());
                            break;
                        case "string":
                            record.Add(e.Name, value.GetString() ?? string.Empty);
                            break;
                        case "double[]":
                            var list = new List<double>(value.GetArrayLength());
                            foreach (JsonElement v in value.EnumerateArray())
                            {
                                list.Add(ReadDouble(v));
                            }

                            record.AddEntry(e.Name, list.ToArray());
                            break;
                        default:
                            throw new SnapshotFormatException("unknown entry type in '" + e.Name + "'");
                    }
                }

                string stored = root.GetProperty("crc32").GetString() ?? string.Empty;
                byte[] binary = EncodeBinary(record);
                string actual = BitConverter.ToUInt32(binary, binary.Length - 4).ToString("x8", CultureInfo.InvariantCulture);
                if (!string.Equals(stored, actual, StringComparison.OrdinalIgnoreCase))
                {
                    throw new SnapshotFormatException("checksum mismatch: stored " + stored + ", computed " + actual + " (the snapshot was edited or is corrupt)");
                }

                return record;
            }
            catch (JsonException ex)
            {
                throw new SnapshotFormatException("malformed JSON snapshot: " + ex.Message, ex);
            }
            catch (KeyNotFoundException ex)
            {
                throw new SnapshotFormatException("incomplete JSON snapshot: " + ex.Message, ex);
            }
            catch (InvalidOperationException ex)
            {
                throw new SnapshotFormatException("malformed JSON snapshot: " + ex.Message, ex);
            }
            catch (FormatException ex)
            {
                throw new SnapshotFormatException("malformed JSON snapshot: " + ex.Message, ex);
            }
        }

        private static void WriteString(BinaryWriter w, string s)
        {
            byte[] b = Encoding.UTF8.GetBytes(s);
            w.Write(checked((ushort)b.Length));
            w.Write(b);
        }

        private static string ReadString(BinaryReader r)
        {
            int n = r.ReadUInt16();
            byte[] b = r.ReadBytes(n);
            if (b.Length != n)
            {
                throw new EndOfStreamException();
            }

            return Encoding.UTF8.GetString(b);
        }
    }

    /// <summary>CRC-32 with the IEEE 802.3 polynomial (reflected 0xEDB88320), table driven.</summary>
    internal static class Crc32
    {
        private static readonly uint[] Table = CreateTable();

        public static uint Compute(byte[] data, int offset, int count)
        {
            uint crc = 0xFFFFFFFFu;
            for (int i = offset; i < offset + count; i++)
            {
                crc = Table[(crc ^ data[i]) & 0xFF] ^ (crc >> 8);
            }

            return ~crc;
        }

        private static uint[] CreateTable()
        {
            var t = new uint[256];
            for (uint n = 0; n < 256; n++)
            {
                uint c = n;
                for (int k = 0; k < 8; k++)
                {
                    c = (c & 1) != 0 ? 0xEDB88320u ^ (c >> 1) : c >> 1;
                }

                t[n] = c;
            }

            return t;
        }
    }
}

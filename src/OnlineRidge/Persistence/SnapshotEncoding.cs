using System;
using System.IO;

namespace OnlineRidge
{
    /// <summary>How an estimator snapshot is encoded. Both encodings carry the same self-describing content and an integrity checksum.</summary>
    public enum SnapshotEncoding
    {
        /// <summary>Compact little-endian binary: format marker, version, kind, named entries, CRC-32. For frequent checkpoints.</summary>
        Binary = 0,

        /// <summary>Indented UTF-8 JSON with the same entries (doubles written in shortest round-trip form) and the CRC-32 of the binary form. For configuration and debugging.</summary>
        Json = 1,
    }

    /// <summary>
    /// Thrown when a snapshot cannot be restored: not a snapshot of this library, truncated, its checksum does not match its content,
    /// an unsupported version, a snapshot of another estimator kind, or content that fails the estimator's own validation.
    /// Nothing is restored when this is thrown.
    /// </summary>
    public sealed class SnapshotFormatException : IOException
    {
        /// <summary>Creates the exception.</summary>
        public SnapshotFormatException()
            : base("invalid snapshot")
        {
        }

        /// <summary>Creates the exception with a message.</summary>
        /// <param name="message">What is wrong.</param>
        public SnapshotFormatException(string message)
            : base(message)
        {
        }

        /// <summary>Creates the exception with a message and a cause.</summary>
        /// <param name="message">What is wrong.</param>
        /// <param name="innerException">The cause.</param>
        public SnapshotFormatException(string message, Exception innerException)
            : base(message, innerException)
        {
        }
    }
}

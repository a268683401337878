using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Text.RegularExpressions;

namespace OnlineRidge.Tests.Support
{
    /// <summary>
    /// One NIST StRD linear least-squares dataset (source: NIST ITL StRD, files in Data/NistStrd, see SOURCE.md there):
    /// data, design model and certified values, read exactly by the line ranges each file's header gives.
    /// </summary>
    public sealed class NistDataset
    {
        public static readonly string[] Names =
        {
            "Norris", "Pontius", "NoInt1", "NoInt2", "Filip", "Longley", "Wampler1", "Wampler2", "Wampler3", "Wampler4", "Wampler5",
        };

        private NistDataset(string name) => Name = name;

        public string Name { get; }

        /// <summary>Design matrix without the intercept column, row-major.</summary>
        public double[] X { get; private set; } = Array.Empty<double>();

        public double[] Y { get; private set; } = Array.Empty<double>();

        public int Rows { get; private set; }

        public int Columns { get; private set; }

        public bool HasIntercept { get; private set; }

        /// <summary>Certified estimates B0..Bk (B1 only for the no-intercept sets).</summary>
        public double[] CertifiedEstimates { get; private set; } = Array.Empty<double>();

        public double[] CertifiedStandardErrors { get; private set; } = Array.Empty<double>();

        public double CertifiedResidualSd { get; private set; }

        public double CertifiedRSquared { get; private set; }

        public static NistDataset Load(string name)
        {
            string path = Path.Combine(AppContext.BaseDirectory, "Data", "NistStrd", name + ".dat");
            string[] lines = File.ReadAllLines(path).Select(l => l.TrimEnd('\r')).ToArray();
            string header = string.Join("\n", lines.Take(10));
            var cert = Regex.Match(header, @"Certified Values\s+\(lines\s+(\d+)\s+to\s+(\d+)\)");
            var data = Regex.Match(header, @"Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\)");
            if (!cert.Success || !data.Success)
            {
                throw new InvalidDataException($"{name}: cannot find the line ranges in the header");
            }

            var ds = new NistDataset(name);
            int c0 = int.Parse(cert.Groups[1].Value, CultureInfo.InvariantCulture);
            int c1 = int.Parse(cert.Groups[2].Value, CultureInfo.InvariantCulture);
            var est = new List<double>();
            var sd = new List<double>();
            for (int ln = c0; ln <= c1; ln++)
            {
                string[] tok = Split(lines[ln - 1]);
                if (tok.Length == 3 && Regex.IsMatch(tok[0], @"^B\d+$"))
                {
                    est.Add(Parse(tok[1]));
                    sd.Add(Parse(tok[2]));
                }
                else if (tok.Length >= 3 && tok[0] == "Standard" && tok[1] == "Deviation")
                {
                    ds.CertifiedResidualSd = Parse(tok[2]);
                }
                else if (tok.Length >= 2 && tok[0] == "R-Squared")
                {
                    ds.CertifiedRSquared = Parse(tok[1]);
                }
            }

            ds.CertifiedEstimates = est.ToArray();
            ds.CertifiedStandardErrors = sd.ToArray();

            int d0 = int.Parse(data.Groups[1].Value, CultureInfo.InvariantCulture);
            int d1 = int.Parse(data.Groups[2].Value, CultureInfo.InvariantCulture);
            var rows = new List<double[]>();
            for (int ln = d0; ln <= d1; ln++)
            {
                rows.Add(Split(lines[ln - 1]).Select(Parse).ToArray());
            }

            ds.Rows = rows.Count;
            ds.Y = rows.Select(r => r[0]).ToArray();
            ds.HasIntercept = !name.StartsWith("NoInt", StringComparison.Ordinal);

            // Model: polynomial in the single x (Pontius, Filip, Wampler), or the raw predictors (Norris, NoInt, Longley).
            int degree = name switch
            {
                "Pontius" => 2,
                "Filip" => 10,
                _ when name.StartsWith("Wampler", StringComparison.Ordinal) => 5,
                _ => 0,
            };
            if (degree > 0)
            {
                ds.Columns = degree;
                ds.X = new double[ds.Rows * degree];
                for (int i = 0; i < ds.Rows; i++)
                {
                    double t = rows[i][1];
                    double pw = 1.0;
                    for (int k = 0; k < degree; k++)
                    {
                        pw *= t;
                        ds.X[(i * degree) + k] = pw;
                    }
                }
            }
            else
            {
                ds.Columns = rows[0].Length - 1;
                ds.X = rows.SelectMany(r => r.Skip(1)).ToArray();
            }

            int expected = ds.Columns + (ds.HasIntercept ? 1 : 0);
            if (ds.CertifiedEstimates.Length != expected)
            {
                throw new InvalidDataException($"{name}: {ds.CertifiedEstimates.Length} certified parameters, model has {expected}");
            }

            return ds;
        }

        /// <summary>
        /// Log relative error (digits of agreement) of a computed value against a certified one, as NIST StRD defines it:
        /// −log₁₀(|x − c|/|c|), or −log₁₀|x| when c = 0; capped at 15 (a perfect match in double precision).
        /// </summary>
        public static double Lre(double computed, double certified)
        {
            double err = certified == 0.0 ? Math.Abs(computed) : Math.Abs(computed - certified) / Math.Abs(certified);
            if (double.IsNaN(err))
            {
                return 0.0;
            }

            return err == 0.0 ? 15.0 : Math.Min(15.0, Math.Max(0.0, -Math.Log10(err)));
        }

        /// <summary>Digits reached by a fit: the minimum LRE over coefficients (intercept first), standard errors, residual SD and R².</summary>
        public (double Coefficients, double StandardErrors, double ResidualSd, double RSquared) Digits(RidgeFit fit)
        {
            var estimates = new List<double>();
            var errors = new List<double>();
            if (HasIntercept)
            {
                estimates.Add(fit.Intercept);
                errors.Add(fit.InterceptStandardError);
            }

            estimates.AddRange(fit.Coefficients);
            errors.AddRange(fit.StandardErrors ?? Enumerable.Repeat(double.NaN, fit.ParameterCount));
            double coefficients = estimates.Select((v, k) => Lre(v, CertifiedEstimates[k])).Min();
            double standardErrors = errors.Select((v, k) => Lre(v, CertifiedStandardErrors[k])).Min();
            return (coefficients, standardErrors, Lre(fit.ResidualStandardDeviation, CertifiedResidualSd), Lre(fit.RSquared, CertifiedRSquared));
        }

        private static string[] Split(string line) => line.Split(new[] { ' ', '\t' }, StringSplitOptions.RemoveEmptyEntries);

        private static double Parse(string s) => double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);
    }
}

using System;
using System.Collections.Generic;
using System.Globalization;

namespace OnlineRidge.Cli
{
    /// <summary>A mistake on the command line (unknown option, bad value); reported with exit code 1.</summary>
    internal sealed class UsageException : Exception
    {
        public UsageException(string message)
            : base(message)
        {
        }
    }

    /// <summary>One input of an ARX model: a column with its order nb and delay nk.</summary>
    internal sealed record ArxInput(string Column, int Order, int Delay);

    /// <summary>The parsed command line. Parsing is done by hand so the option names and help text are entirely ours.</summary>
    internal sealed class CliOptions
    {
        public string DataPath { get; private set; } = string.Empty;

        public string Target { get; private set; } = string.Empty;

        public List<string> Regressors { get; } = new();

        public int? OutputOrder { get; private set; }

        public List<ArxInput> ArxInputs { get; } = new();

        public string? WeightColumn { get; private set; }

        public string Estimator { get; private set; } = "batch";

        public double Forgetting { get; private set; } = 1.0;

        public double Penalty { get; private set; }

        public bool ChoosePenaltyByGcv { get; private set; }

        public bool Standardize { get; private set; } = true;

        public bool Intercept { get; private set; } = true;

        public RidgeSolver Solver { get; private set; } = RidgeSolver.Auto;

        public int Every { get; private set; } = 1;

        public string? OutPrefix { get; private set; }

        public double Level { get; private set; } = 0.95;

        public string? PlotPath { get; private set; }

        public char Separator { get; private set; } = ',';

        public bool Quiet { get; private set; }

        public bool ShowHelp { get; private set; }

        /// <summary>True when the regressors are built as an ARX model.</summary>
        public bool IsArx => OutputOrder.HasValue || ArxInputs.Count > 0;

        public static string HelpText(IReadOnlyCollection<string> estimators) =>
$@"ridgefit — regularized least squares over a CSV stream (batch or recursive), with uncertainty and diagnostics.

Usage:
  ridgefit --data FILE.csv --target COLUMN (--regressors A,B,... | --output-order NA --input COLUMN:NB:NK ...) [options]

The CSV file has a header row; columns are chosen by name. Every row is one sample; fields must be numbers
(invariant culture, '.' as decimal point). The file is read once, as a stream.

Model:
  --data FILE              CSV file to read (""-"" reads standard input).
  --target COLUMN          the output y (the measured signal the model explains).
  --regressors A,B,...     static model: regressor vector x = the values of these columns in the same row.
  --output-order NA        ARX model: number of past outputs −y(t−1) … −y(t−NA) in the regressor (0 allowed).
  --input COLUMN:NB:NK     ARX model: input column with order NB (number of its samples in the regressor) and delay NK
                           (samples between the input and its first effect; 0 = direct feedthrough). Repeat per input.
                           The regressor is φ(t) = [−y(t−1) … −y(t−NA), u(t−NK) … u(t−NK−NB+1), …] (sign convention of
                           Ljung 1999), so the coefficients are the a and b of y(t) + a₁y(t−1) + … = b₁u(t−NK) + … + e(t).
                           The first max(NA, NK+NB−1) samples only fill the lag buffers and produce no regressor row.
  --weights COLUMN         per-sample precision weight w ≥ 0 (default 1).

Estimator:
  --estimator NAME         one of: {string.Join(", ", estimators)} (default batch). batch solves once over all rows
                           (keeps the regressor rows in memory: 8·(p+2) bytes per row); the recursive forms update the
                           estimate sample by sample in constant memory and write the parameter trajectory:
                             square-root  orthogonal (Givens) updates of the data factor; the most accurate recursive form;
                                          also offers --penalty gcv and VIFs from its final state.
                             information  accumulated Gram statistics, solved by Cholesky when read; exact for any penalty,
                                          loses digits like cond² (as the batch Cholesky solver).
                             covariance   classic recursive least squares (covariance matrix update, cheapest per sample, no
                                          solve when read); no standardization; --penalty is the initial prior weight δ
                                          (default 1e-4), which is forgotten with the data; the intercept is a constant
                                          regressor that the prior covers too.
  --forgetting BETA        forgetting factor β in (0, 1]: a sample k steps old carries weight β^k; effective memory is about
                           1/(1−β) samples. Default 1 (no forgetting).
  --penalty VALUE|gcv      ridge penalty λ ≥ 0 added to the diagonal of the (standardized) Gram matrix; default 0 (least squares).
                           gcv: choose λ on a grid by generalized cross-validation, then fit with it (batch: over all
                           rows; square-root: from the final state, with the discounted count as the number of samples;
                           the trajectory of a recursive form is then computed with λ = 0).
  --no-standardize         penalize raw coefficients (by default the penalty acts on regressors scaled to unit deviation,
                           so it does not depend on their units).
  --no-intercept           fit no constant term (the model passes through the origin).
  --solver NAME            batch solver: auto (default), cholesky (fastest, loses digits like cond²), qr (backward stable),
                           svd (also handles rank deficiency by the minimum-norm solution).

Output:
  --out PREFIX             write PREFIX.estimate.csv and PREFIX.estimate.json (parameters, standard errors, intervals,
                           diagnostics) and, for recursive forms, PREFIX.trajectory.csv. Each file is written to a temporary
                           file in the same folder and moved into place only when the whole run succeeded.
  --plot FILE.png|FILE.svg recursive forms: draw the parameter trajectory (at most 4096 evenly spaced points per parameter).
                           Written like the other outputs: only when the whole run succeeded.
  --every K                recursive forms: read the estimate every K-th regressor row (default 1) — one trajectory row and
                           one one-step-ahead prediction error y(t) − ŷ(t|t−1) each time. Reading costs a solve (O(p³) for the
                           square-root form), updating only O(p²): a larger K makes long files much faster.
  --level L                confidence level of the intervals, in (0, 1) (default 0.95).
  --separator C            field separator (default ','; use 'tab' for tab-separated files).
  --quiet                  no progress bar (it is only shown when standard error is a terminal and the file is large).
  --help                   this text.

Exit codes: 0 success; 1 command-line mistake; 2 malformed input (the message names the line and column);
3 numerical breakdown of the estimator. No output file is left behind unless the exit code is 0.
";

        public static CliOptions Parse(IReadOnlyList<string> args)
        {
            var o = new CliOptions();
            var seen = new HashSet<string>(StringComparer.Ordinal);
            for (int i = 0; i < args.Count; i++)
            {
                string name = args[i];
                string? inlineValue = null;
                int eq = name.IndexOf('=', StringComparison.Ordinal);
                if (name.StartsWith("--", StringComparison.Ordinal) && eq > 0)
                {
                    inlineValue = name.Substring(eq + 1);
                    name = name.Substring(0, eq);
                }

                string Value()
                {
                    if (inlineValue is not null)
                    {
                        return inlineValue;
                    }

                    if (i + 1 >= args.Count)
                    {
                        throw new UsageException($"option {name} needs a value.");
                    }

                    return args[++i];
                }

                if (name != "--input" && !seen.Add(name))
                {
                    throw new UsageException($"option {name} is given twice.");
                }

                switch (name)
                {
                    case "--help":
                    case "-h":
                    case "-?":
                        o.ShowHelp = true;
                        break;
                    case "--data":
                        o.DataPath = Value();
                        break;
                    case "--target":
                        o.Target = Value();
                        break;
                    case "--regressors":
                        foreach (string c in Value().Split(','))
                        {
                            if (c.Trim().Length == 0)
                            {
                                throw new UsageException("--regressors has an empty column name.");
                            }

                            o.Regressors.Add(c.Trim());
                        }

                        break;
                    case "--output-order":
                        o.OutputOrder = ParseInt(name, Value(), 0);
                        break;
                    case "--input":
                        o.ArxInputs.Add(ParseArxInput(Value()));
                        break;
                    case "--weights":
                        o.WeightColumn = Value();
                        break;
                    case "--estimator":
                        o.Estimator = Value().ToLowerInvariant();
                        break;
                    case "--forgetting":
                        o.Forgetting = ParseDouble(name, Value());
                        if (!(o.Forgetting > 0 && o.Forgetting <= 1))
                        {
                            throw new UsageException($"--forgetting {o.Forgetting.ToString("R", CultureInfo.InvariantCulture)} is invalid: a forgetting factor must lie in (0, 1].");
                        }

                        break;
                    case "--penalty":
                        string pv = Value();
                        if (string.Equals(pv, "gcv", StringComparison.OrdinalIgnoreCase))
                        {
                            o.ChoosePenaltyByGcv = true;
                        }
                        else
                        {
                            o.Penalty = ParseDouble(name, pv);
                            if (!(o.Penalty >= 0) || double.IsInfinity(o.Penalty))
                            {
                                throw new UsageException($"--penalty {pv} is invalid: a penalty must be a finite number >= 0 or 'gcv'.");
                            }
                        }

                        break;
                    case "--no-standardize":
                        o.Standardize = false;
                        break;
                    case "--no-intercept":
                        o.Intercept = false;
                        break;
                    case "--solver":
                        o.Solver = Value().ToLowerInvariant() switch
                        {
                            "auto" => RidgeSolver.Auto,
                            "cholesky" => RidgeSolver.Cholesky,
                            "qr" => RidgeSolver.Qr,
                            "svd" => RidgeSolver.Svd,
                            string s => throw new UsageException($"--solver {s} is unknown; use auto, cholesky, qr or svd."),
                        };
                        break;
                    case "--every":
                        o.Every = ParseInt(name, Value(), 1);
                        break;
                    case "--out":
                        o.OutPrefix = Value();
                        break;
                    case "--plot":
                        o.PlotPath = Value();
                        if (!TrajectoryPlot.IsSupported(o.PlotPath))
                        {
                            throw new UsageException($"--plot '{o.PlotPath}' is invalid: the file name must end in .png or .svg.");
                        }

                        break;
                    case "--level":
                        o.Level = ParseDouble(name, Value());
                        if (!(o.Level > 0 && o.Level < 1))
                        {
                            throw new UsageException("--level must lie in (0, 1).");
                        }

                        break;
                    case "--separator":
                        string sep = Value();
                        o.Separator = sep switch
                        {
                            "tab" or "\\t" or "\t" => '\t',
                            _ when sep.Length == 1 => sep[0],
                            _ => throw new UsageException($"--separator '{sep}' is invalid: give one character or 'tab'."),
                        };
                        break;
                    case "--quiet":
                        o.Quiet = true;
                        break;
                    default:
                        throw new UsageException($"unknown option '{args[i]}'.");
                }
            }

            if (o.ShowHelp)
            {
                return o;
            }

            if (o.DataPath.Length == 0)
            {
                throw new UsageException("--data FILE is required.");
            }

            if (o.Target.Length == 0)
            {
                throw new UsageException("--target COLUMN is required.");
            }

            if (o.IsArx && o.Regressors.Count > 0)
            {
                throw new UsageException("give either --regressors (static model) or --output-order/--input (ARX model), not both.");
            }

            if (!o.IsArx && o.Regressors.Count == 0)
            {
                throw new UsageException("no regressors: give --regressors A,B,... or an ARX model (--output-order NA, --input COLUMN:NB:NK).");
            }

            if (o.PlotPath is not null && o.Estimator == "batch")
            {
                throw new UsageException("--plot draws the parameter trajectory of a recursive --estimator; the batch estimator has none.");
            }

            return o;
        }

        private static ArxInput ParseArxInput(string value)
        {
            string[] parts = value.Split(':');
            if (parts.Length != 3 || parts[0].Length == 0)
            {
                throw new UsageException($"--input '{value}' is invalid: expected COLUMN:ORDER:DELAY, e.g. valve:2:1.");
            }

            return new ArxInput(parts[0], ParseInt("--input order", parts[1], 0), ParseInt("--input delay", parts[2], 0));
        }

        private static int ParseInt(string name, string value, int min)
        {
            if (!int.TryParse(value, NumberStyles.Integer, CultureInfo.InvariantCulture, out int v) || v < min)
            {
                throw new UsageException($"{name} '{value}' is invalid: expected a whole number >= {min}.");
            }

            return v;
        }

        private static double ParseDouble(string name, string value)
        {
            if (!double.TryParse(value, NumberStyles.Float, CultureInfo.InvariantCulture, out double v))
            {
                throw new UsageException($"{name} '{value}' is not a number.");
            }

            return v;
        }
    }
}

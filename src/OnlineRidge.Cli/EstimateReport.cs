using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Text.Json;

namespace OnlineRidge.Cli
{
    /// <summary>The final estimate with its uncertainty and diagnostics, written as CSV, JSON and a console summary.</summary>
    internal sealed class EstimateReport
    {
        private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;
        private static readonly System.Buffers.SearchValues<char> CsvSpecial = System.Buffers.SearchValues.Create(",\"\n\r");

        public string Estimator { get; init; } = string.Empty;

        public string Source { get; init; } = string.Empty;

        public long SamplesRead { get; init; }

        public long Rows { get; init; }

        public int WarmUpSamples { get; init; }

        public IReadOnlyList<string> Terms { get; init; } = Array.Empty<string>();

        public double ForgettingFactor { get; init; }

        public bool Standardize { get; init; }

        public bool Intercept { get; init; }

        public double Level { get; init; }

        public PenaltyChoice? PenaltyChoice { get; set; }

        public RidgeFit? Fit { get; private set; }

        public CollinearityDiagnostics? Collinearity { get; private set; }

        public double FinalIntercept { get; private set; }

        public double[] Coefficients { get; private set; } = Array.Empty<double>();

        public double Penalty { get; private set; }

        /// <summary>Recursive forms: root mean square of the one-step-ahead prediction errors (weighted).</summary>
        public double PredictionErrorRms { get; private set; } = double.NaN;

        /// <summary>Recursive forms: number of one-step-ahead predictions in <see cref="PredictionErrorRms"/>.</summary>
        public long PredictionCount { get; private set; }

        /// <summary>Recursive forms: the form's own final diagnostics.</summary>
        public IReadOnlyList<KeyValuePair<string, double>> RecursiveDiagnostics { get; private set; } = Array.Empty<KeyValuePair<string, double>>();

        public void SetBatch(RidgeFit fit, CollinearityDiagnostics collinearity)
        {
            Fit = fit;
            Collinearity = collinearity;
            FinalIntercept = fit.Intercept;
            Coefficients = new double[fit.ParameterCount];
            fit.CopyCoefficientsTo(Coefficients);
            Penalty = fit.Penalty;
        }

        public void SetRecursive(double intercept, double[] theta, double predictionErrorRms, long predictionCount, double penalty, IReadOnlyList<KeyValuePair<string, double>> extra, CollinearityDiagnostics? collinearity)
        {
            Collinearity = collinearity;
            RecursiveDiagnostics = extra;
            PredictionCount = predictionCount;
            FinalIntercept = intercept;
            Coefficients = (double[])theta.Clone();
            PredictionErrorRms = predictionErrorRms;
            Penalty = penalty;
        }

        private Interval? CoefficientInterval(int j) => Fit is { StandardErrors: not null } f ? f.CoefficientInterval(j, Level) : null;

        private Interval? InterceptInterval() => Fit is { HasIntercept: true, StandardErrors: not null } f ? f.InterceptInterval(Level) : null;

        private double Vif(int j) => Collinearity?.VarianceInflationFactors is { } v ? v[j] : double.NaN;

        public void WriteCsv(TextWriter w)
        {
            w.WriteLine("term,estimate,std_error,lower,upper,vif");
            if (Intercept)
            {
                Row(w, "(intercept)", FinalIntercept, InterceptInterval(), double.NaN);
            }

            for (int j = 0; j < Coefficients.Length; j++)
            {
                Row(w, Terms[j], Coefficients[j], CoefficientInterval(j), Vif(j));
            }
        }

        private static void Row(TextWriter w, string term, double estimate, Interval? ci, double vif)
        {
            w.Write(CsvField(term));
            w.Write(',');
            w.Write(Num(estimate));
            w.Write(',');
            w.Write(ci is { } a ? Num(a.StandardError) : string.Empty);
            w.Write(',');
            w.Write(ci is { } b ? Num(b.Lower) : string.Empty);
            w.Write(',');
            w.Write(ci is { } c ? Num(c.Upper) : string.Empty);
            w.Write(',');
            w.WriteLine(double.IsFinite(vif) ? Num(vif) : string.Empty);
        }

        public void WriteJson(Stream stream)
        {
            using var j = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true });
            j.WriteStartObject();
            j.WriteString("estimator", Estimator);
            j.WriteString("source", Source);
            j.WriteNumber("samplesRead", SamplesRead);
            j.WriteNumber("rows", Rows);
            j.WriteNumber("warmUpSamples", WarmUpSamples);
            Number(j, "penalty", Penalty);
            j.WriteString("penaltyChosenBy", PenaltyChoice is null ? "given" : "generalized cross-validation");
            if (PenaltyChoice is { } pc)
            {
                j.WriteBoolean("penaltyOnGridEdge", pc.OnGridEdge);
                Number(j, "gcvValue", pc.Value);
            }

            Number(j, "forgettingFactor", ForgettingFactor);
            j.WriteBoolean("standardize", Standardize);
            Number(j, "level", Level);
            if (Intercept)
            {
                j.WritePropertyName("intercept");
                Term(j, "(intercept)", FinalIntercept, InterceptInterval(), double.NaN);
            }
            else
            {
                j.WriteNull("intercept");
            }

            j.WriteStartArray("coefficients");
            for (int k = 0; k < Coefficients.Length; k++)
            {
                Term(j, Terms[k], Coefficients[k], CoefficientInterval(k), Vif(k));
            }

            j.WriteEndArray();
            j.WriteStartObject("diagnostics");
            if (Fit is { } f)
            {
                j.WriteString("solver", f.SolverUsed.ToString());
                Number(j, "conditionEstimate", f.ConditionEstimate);
                j.WriteNumber("rank", f.Rank);
                Number(j, "residualStandardDeviation", f.ResidualStandardDeviation);
                Number(j, "residualDegreesOfFreedom", f.ResidualDegreesOfFreedom);
                Number(j, "rSquared", f.RSquared);
                Number(j, "effectiveDegreesOfFreedom", f.EffectiveDegreesOfFreedom);
                j.WriteStartArray("excludedColumns");
                foreach (int c in f.ExcludedColumns)
                {
                    j.WriteStringValue(Terms[c]);
                }

                j.WriteEndArray();
            }
            else
            {
                Number(j, "oneStepPredictionErrorRms", PredictionErrorRms);
                j.WriteNumber("oneStepPredictions", PredictionCount);
                foreach (var kv in RecursiveDiagnostics)
                {
                    Number(j, kv.Key, kv.Value);
                }
            }

            if (Collinearity is { } d)
            {
                Number(j, "standardizedConditionNumber", d.ConditionNumber);
                j.WriteBoolean("rankDeficient", d.IsRankDeficient);
            }

            j.WriteEndObject();
            j.WriteEndObject();
        }

        private static void Term(Utf8JsonWriter j, string name, double estimate, Interval? ci, double vif)
        {
            j.WriteStartObject();
            j.WriteString("term", name);
            Number(j, "estimate", estimate);
            Number(j, "standardError", ci?.StandardError ?? double.NaN);
            Number(j, "lower", ci?.Lower ?? double.NaN);
            Number(j, "upper", ci?.Upper ?? double.NaN);
            Number(j, "vif", vif);
            j.WriteEndObject();
        }

        private static void Number(Utf8JsonWriter j, string name, double v)
        {
            if (double.IsFinite(v))
            {
                j.WriteNumber(name, v);
            }
            else
            {
                j.WriteNull(name);
            }
        }

        public void WriteSummary(TextWriter w)
        {
            w.WriteLine(string.Format(Inv, "{0} estimate from {1} rows of {2} ({3} samples, {4} for warm-up); penalty {5:G6}{6}; forgetting factor {7:G6}", Estimator, Rows, Source, SamplesRead, WarmUpSamples, Penalty, PenaltyChoice is null ? string.Empty : " (chosen by GCV)", ForgettingFactor));
            bool ci = Fit?.StandardErrors is not null;
            bool vif = Collinearity?.VarianceInflationFactors is not null;
            w.WriteLine(string.Format(Inv, "{0,-16} {1,14}", "term", "estimate")
                + (ci ? string.Format(Inv, " {0,12} {1,14} {2,14}", "std.error", "lower " + Level.ToString("P0", Inv), "upper") : string.Empty)
                + (vif ? string.Format(Inv, " {0,9}", "VIF") : string.Empty));
            if (Intercept)
            {
                SummaryRow(w, "(intercept)", FinalIntercept, InterceptInterval(), double.NaN, ci, vif);
            }

            for (int j = 0; j < Coefficients.Length; j++)
            {
                SummaryRow(w, Terms[j], Coefficients[j], CoefficientInterval(j), Vif(j), ci, vif);
            }

            if (Fit is { } f)
            {
                w.WriteLine(string.Format(Inv, "solver {0}, condition estimate {1:E2}, residual s.d. {2:G6}, R² {3:F6}, effective d.f. {4:G6}", f.SolverUsed, f.ConditionEstimate, f.ResidualStandardDeviation, f.RSquared, f.EffectiveDegreesOfFreedom));
            }
            else
            {
                w.WriteLine(string.Format(Inv, "one-step-ahead prediction error RMS {0:G6} over {1} predictions{2}", PredictionErrorRms, PredictionCount, string.Concat(RecursiveDiagnostics.Select(kv => string.Format(Inv, ", {0} {1:G6}", kv.Key, kv.Value)))));
                w.WriteLine("(standard errors and intervals are reported by the batch estimator)");
            }
        }

        private static void SummaryRow(TextWriter w, string term, double estimate, Interval? interval, double vif, bool ci, bool showVif)
        {
            w.WriteLine(string.Format(Inv, "{0,-16} {1,14:G8}", term, estimate)
                + (ci ? string.Format(Inv, " {0,12:G4} {1,14:G8} {2,14:G8}", interval?.StandardError, interval?.Lower, interval?.Upper) : string.Empty)
                + (showVif ? string.Format(Inv, " {0,9}", double.IsFinite(vif) ? vif.ToString("G4", Inv) : string.Empty) : string.Empty));
        }

        public static string Num(double v) => v.ToString("R", Inv);

        public static string CsvField(string s) => s.AsSpan().IndexOfAny(CsvSpecial) >= 0 ? "\"" + s.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"" : s;
    }
}

using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics.Power;
using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>A power block evaluated: power at a planned n and/or the n a target power needs, for an effect given or observed.</summary>
public sealed class PowerOutcome(BoundBlock block) : BlockOutcome(block)
{
    public IReadOnlyDictionary<string, ResultValue> Values { get; init; } = AnovaOutcome.NoValues;

    public IReadOnlyDictionary<string, ResultValue> Required { get; init; } = AnovaOutcome.NoValues;

    public bool Observed { get; init; }

    public double Alpha { get; init; }

    public int Groups { get; init; }

    public double Effect { get; init; }

    public double? Target { get; init; }
}

/// <summary>Evaluates <c>power</c> blocks into values (no HTML, no report text).</summary>
public sealed class PowerEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new PowerEvaluator());

    public override string Kind => "power";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var o = block.OptionsOf<PowerKind.Options>();
        // What the block hands on when it computes nothing (a mistake, or nothing to compute).
        var stopped = new PowerOutcome(block) { Alpha = o.Alpha, Target = o.Target };
        var observed = false;
        var groups = o.Groups;
        var effect = o.Effect;
        string? term = null;
        IReadOnlyList<string> inputs = [];
        if (o.Of is { } designOf && context.Outcomes.GetValueOrDefault(designOf) is AnovaOutcome { Design: not null })
        {
            diagnostics.DesignViewUnavailable(o.Location, "power", designOf, "its header declares a layout (blocks, plots, random or nested factors), and power of the tests of a design with strata is not available in this version; give 'groups' and 'effect' without 'of' for a completely randomized plan");
            return stopped;
        }

        if (o.Of is { } covOf && context.Outcomes.GetValueOrDefault(covOf) is AnovaOutcome { Ancova: not null })
        {
            diagnostics.CovariateViewUnavailable(o.Location, "power", covOf);
            return stopped;
        }

        if (o.Of is { } of && context.Outcomes.GetValueOrDefault(of) is AnovaOutcome { Result: not null } anova)
        {
            var factor = o.Factor is null ? anova.Data!.Factors[0] : anova.Data!.Factors.FirstOrDefault(f => f.Spec.Name == o.Factor);
            if (factor is null || (o.Factor is null && anova.Data.Factors.Count > 1))
            {
                diagnostics.FactorChoiceNeeded(o.Location, of);
                return stopped;
            }

            term = factor.Spec.Name;
            var t = anova.Result.Terms.First(x => x.Name == term);
            if (!t.CohenF.IsDefined)
            {
                diagnostics.PowerNeeds(o.Location, $"a defined Cohen's f; in '{of}' it is not defined ({t.CohenF.Reason})");
                return stopped;
            }

            effect ??= t.CohenF.Value;
            groups ??= factor.Levels.Count;
            observed = o.Effect is null;
            inputs = [anova.Block.Data!];
        }

        if (effect is null || groups is null)
        {
            return new PowerOutcome(block) { Alpha = o.Alpha, Target = o.Target, Observed = observed };
        }

        var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        var required = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        if (o.N is { } n)
        {
            var power = AnovaPower.Power(effect.Value, groups.Value, n, o.Alpha);
            values[Stat.Power] = context.Results.Add(block.Id, TestName.Power, term, null, null, Stat.Power, power, inputs);
            values[Stat.NPerGroup] = context.Results.Add(block.Id, TestName.Power, term, null, null, Stat.NPerGroup, n, inputs);
            values[Stat.NTotal] = context.Results.Add(block.Id, TestName.Power, term, null, null, Stat.NTotal, (double)n * groups.Value, inputs);
            values[Stat.EffectF] = context.Results.Add(block.Id, TestName.Power, term, null, null, Stat.EffectF, effect.Value, inputs);
        }

        if (o.Target is { } target)
        {
            var size = AnovaPower.SampleSize(effect.Value, groups.Value, o.Alpha, target);
            required[Stat.NPerGroup] = context.Results.Add(block.Id, TestName.Power, term, "target", null, Stat.NPerGroup, size.NPerGroup, inputs);
            required[Stat.NTotal] = context.Results.Add(block.Id, TestName.Power, term, "target", null, Stat.NTotal, size.TotalN, inputs);
            required[Stat.Power] = context.Results.Add(block.Id, TestName.Power, term, "target", null, Stat.Power, size.AchievedPower, inputs);
            required[Stat.EffectF] = context.Results.Add(block.Id, TestName.Power, term, "target", null, Stat.EffectF, effect.Value, inputs);
        }

        var figures = new List<FigurePlan>();
        if (context.Header.Report.Figures && Figures.PowerCurve(groups.Value, effect.Value, o.Alpha, o.Target, values, required) is { } curve)
        {
            figures.Add(curve);
        }

        return new PowerOutcome(block)
        {
            Alpha = o.Alpha,
            Target = o.Target,
            Observed = observed,
            Groups = groups.Value,
            Effect = effect.Value,
            Values = values.AsReadOnly(),
            Required = required.AsReadOnly(),
            Figures = figures.AsReadOnly(),
        };
    }
}

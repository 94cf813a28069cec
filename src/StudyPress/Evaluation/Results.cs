using StudyPress.Statistics;

namespace StudyPress.Evaluation;

/// <summary>One entry of the results manifest: where a number came from and its full value.</summary>
public sealed record ResultValue(
    string Id,
    string Block,
    string Test,
    string? Term,
    string? Level,
    IReadOnlyList<string>? Pair,
    string Stat,
    Quantity Value,
    IReadOnlyList<string> Inputs)
{
    /// <summary>The components a prose reference can name, in path order.</summary>
    public IEnumerable<string> Components()
    {
        yield return Test;
        if (Term is not null)
        {
            yield return Term;
        }

        if (Level is not null)
        {
            yield return Level;
        }

        if (Pair is not null)
        {
            foreach (var p in Pair)
            {
                yield return p;
            }
        }
    }
}

/// <summary>All values of a compilation, in a stable order; ids are assigned in that order.</summary>
public sealed class ResultSet
{
    private readonly List<ResultValue> values = [];

    public IReadOnlyList<ResultValue> Values => values;

    public ResultValue Add(string block, string test, string? term, string? level, IReadOnlyList<string>? pair, string stat, Quantity value, IReadOnlyList<string> inputs)
    {
        // One vocabulary (Vocabulary.cs): a name outside it is a programming error, caught by the tests.
        if (!TestName.All.ContainsKey(test) || !Stat.All.ContainsKey(stat))
        {
            throw new InvalidOperationException($"'{test}.{stat}' is not in the manifest vocabulary (Evaluation/Vocabulary.cs)");
        }

        var v = new ResultValue("v" + (values.Count + 1).ToString(System.Globalization.CultureInfo.InvariantCulture), block, test, term, level, pair, stat, value, inputs);
        values.Add(v);
        return v;
    }

    public ResultValue Add(string block, string test, string? term, string? level, IReadOnlyList<string>? pair, string stat, double value, IReadOnlyList<string> inputs) =>
        Add(block, test, term, level, pair, stat, Quantity.Of(value), inputs);
}

using System.Globalization;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Binding;

/// <summary>Typed, positioned access to the keys of one YAML map, reporting mistakes as it goes.</summary>
public sealed class KeyReader
{
    private readonly YMapping map;
    private readonly DiagnosticBag diagnostics;
    private readonly string where;

    public KeyReader(YMapping map, string where, IReadOnlyCollection<string> allowed, DiagnosticBag diagnostics)
    {
        this.map = map;
        this.where = where;
        this.diagnostics = diagnostics;
        foreach (var e in map.Entries)
        {
            if (!allowed.Contains(e.Key.Value))
            {
                var near = DiagnosticBag.Nearest(e.Key.Value, allowed);
                diagnostics.UnknownKey(e.Key.Location, e.Key.Value, where, near);
                if (near is not null)
                {
                    misspelt.Add(near);
                }
                else
                {
                    // No close key: it may have been meant as any key the map does not write
                    // ('contrasts:' for 'compare:'), so no rule reports one of those as missing.
                    foreach (var key in allowed)
                    {
                        if (map[key] is null)
                        {
                            misspelt.Add(key);
                        }
                    }
                }
            }
        }
    }

    private readonly HashSet<string> misspelt = new(StringComparer.Ordinal);

    /// <summary>
    /// Keys that an unknown key of this map was probably meant to be (already reported with a
    /// "did you mean"; every key the map does not write when the unknown key is close to none): a
    /// rule that needs one of them stays quiet, so one typo gives one message.
    /// </summary>
    public IReadOnlySet<string> Misspelt => misspelt;

    public YMapping Map => map;

    public YNode? Node(string key) => map[key];

    public SourceLocation KeyLocation(string key) =>
        map.Entries.FirstOrDefault(e => e.Key.Value == key)?.Key.Location ?? map.Location;

    public bool Has(string key) => map[key] is { } n && !(n is YScalar { IsNull: true });

    public YScalar? Scalar(string key)
    {
        var node = map[key];
        switch (node)
        {
            case null:
                return null;
            case YScalar { IsNull: true }:
                return null;
            case YScalar s:
                return s;
            default:
                diagnostics.ExpectedScalar(node.Location, $"'{key}'");
                return null;
        }
    }

    public string? String(string key) => Scalar(key)?.Value;

    public string RequiredString(string key)
    {
        var s = Scalar(key);
        if (s is null && map[key] is null or YScalar && !misspelt.Contains(key))
        {
            diagnostics.MissingKey(map.Location, key, where);
        }

        return s?.Value ?? string.Empty;
    }

    public double? Number(string key)
    {
        var s = Scalar(key);
        if (s is null)
        {
            return null;
        }

        if (double.TryParse(s.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) && double.IsFinite(v))
        {
            if (NumberRules.IsUnderflow(s.Value, v))
            {
                diagnostics.HeaderNumberTooSmall(s.Location, key, s.Value);
                return null;
            }

            return v;
        }

        diagnostics.NotANumber(s.Location, key, s.Value);
        return null;
    }

    public int? Integer(string key, int min, int max)
    {
        var s = Scalar(key);
        if (s is null)
        {
            return null;
        }

        if (int.TryParse(s.Value, NumberStyles.Integer, CultureInfo.InvariantCulture, out var v) && v >= min && v <= max)
        {
            return v;
        }

        diagnostics.NotAnInteger(s.Location, key, s.Value, min, max);
        return null;
    }

    public string? Choice(string key, IReadOnlyList<string> choices)
    {
        var s = Scalar(key);
        if (s is null)
        {
            return null;
        }

        if (choices.Contains(s.Value))
        {
            return s.Value;
        }

        diagnostics.BadChoice(s.Location, key, s.Value, choices, DiagnosticBag.Nearest(s.Value, choices));
        return null;
    }

    public bool? Boolean(string key)
    {
        var s = Scalar(key);
        if (s is null)
        {
            return null;
        }

        switch (s.Value)
        {
            case "true" or "True" or "yes":
                return true;
            case "false" or "False" or "no":
                return false;
            default:
                diagnostics.BadChoice(s.Location, key, s.Value, ["true", "false"], null);
                return null;
        }
    }

    /// <summary>A list of scalars; a single scalar is taken as a list of one.</summary>
    /// <param name="textMayHaveCommas">False where a comma in a single text surely means a list written as text.</param>
    public IReadOnlyList<YScalar>? ScalarList(string key, bool textMayHaveCommas = false)
    {
        var node = map[key];
        switch (node)
        {
            case null or YScalar { IsNull: true }:
                return null;
            case YScalar s when !textMayHaveCommas && s.Value.Contains(',', StringComparison.Ordinal):
                // "A, B, C" is one text, not three items: say how to write the list.
                diagnostics.ListWrittenAsText(s.Location, key, s.Value);
                return null;
            case YScalar s:
                return [s];
            case YSequence seq:
                var list = new List<YScalar>();
                foreach (var item in seq.Items)
                {
                    if (item is YScalar si)
                    {
                        list.Add(si);
                    }
                    else
                    {
                        diagnostics.ExpectedScalar(item.Location, $"each item of '{key}'");
                    }
                }

                return list;
            default:
                diagnostics.ExpectedList(node.Location, $"'{key}'");
                return null;
        }
    }
}

using StudyPress.Diagnostics;
using StudyPress.Syntax;
using StudyPress.Binding.Kinds;

namespace StudyPress.Binding;

/// <summary>
/// Binds analysis blocks: ids (explicit or kind plus running number), the keys every kind
/// accepts (data, response, factors, where, caption) and then the kind's own keys.
/// </summary>
internal static class BlockBinder
{
    /// <summary>Upper bound on blocks per study, so a hostile file cannot make the build unbounded.</summary>
    public const int MaxBlocks = 1000;

    public static List<BoundBlock> Bind(StudySyntax syntax, StudyHeader header, DiagnosticBag diagnostics)
    {
        var blocks = new List<BoundBlock>();
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        var owners = new Dictionary<string, AnalysisBlockSyntax>(StringComparer.Ordinal);
        var counters = new Dictionary<string, int>(StringComparer.Ordinal);
        var failed = new HashSet<string>(syntax.FailedIds, StringComparer.Ordinal);
        var reported = new HashSet<string>(StringComparer.Ordinal);
        if (syntax.Blocks.Count > MaxBlocks)
        {
            diagnostics.TooManyBlocks(syntax.Blocks[MaxBlocks].Location, MaxBlocks);
            return blocks;
        }

        // Explicit ids first, so an automatic id never takes a name the user wrote later.
        foreach (var b in syntax.Blocks.Where(b => b.Id is not null))
        {
            if (!HeaderBinder.IsName(b.Id!))
            {
                diagnostics.BadBlockId(b.IdLocation, b.Id!);
            }
            else if (ids.TryGetValue(b.Id!, out var firstLine))
            {
                diagnostics.DuplicateBlockId(b.IdLocation, b.Id!, firstLine);
            }
            else
            {
                ids[b.Id!] = b.Location.Line;
                owners[b.Id!] = b;
            }
        }

        foreach (var b in syntax.Blocks)
        {
            var kind = BlockKinds.All[b.Kind];
            var id = b.Id;
            if (id is null)
            {
                do
                {
                    counters[b.Kind] = counters.GetValueOrDefault(b.Kind) + 1;
                    id = b.Kind + counters[b.Kind].ToString(System.Globalization.CultureInfo.InvariantCulture);
                }
                while (ids.ContainsKey(id));
                ids[id] = b.Location.Line;
            }

            if (b.Body is null)
            {
                failed.Add(id); // its YAML mistake is reported
                continue;
            }

            if (b.Id is not null && owners.GetValueOrDefault(b.Id) != b)
            {
                continue;
            }

            var bound = BindOne(b, id, kind, new BindContext(header, blocks, b, owners) { Failed = failed, ReportedNames = reported }, diagnostics);
            if (bound is not null)
            {
                blocks.Add(bound);
            }
            else
            {
                failed.Add(id);
            }
        }

        return blocks;
    }

    private static BoundBlock? BindOne(AnalysisBlockSyntax b, string id, BlockKind kind, BindContext context, DiagnosticBag diagnostics)
    {
        var header = context.Header;
        var allowed = BlockKinds.CommonKeys.Concat(kind.OwnKeys).ToArray();
        var keys = new KeyReader(b.Body!, $"the {kind.Name} block", allowed, diagnostics);
        var before = diagnostics.Items.Count;
        if (kind.AnalysesAnovaBlock)
        {
            return BindOnAnova(b, id, kind, keys, context, diagnostics, before);
        }

        string? data = null;
        string? response = null;
        var responseLocation = b.Location;
        var factors = new List<FactorSpec>();
        var factorsLocation = b.Location;
        var where = new List<WhereFilter>();
        if (kind.UsesData)
        {
            if (keys.Scalar("data") is { } dataNode)
            {
                if (header.Dataset(dataNode.Value) is null)
                {
                    diagnostics.UnknownDataset(dataNode.Location, dataNode.Value, DiagnosticBag.Nearest(dataNode.Value, header.Datasets.Select(d => d.Name)));
                }
                else
                {
                    data = dataNode.Value;
                }
            }
            else if (header.Datasets.Count == 1)
            {
                data = header.Datasets[0].Name;
            }
            else if (header.Datasets.Count > 1)
            {
                diagnostics.DatasetNeeded(b.Location);
            }

            if (keys.Scalar("response") is { } responseNode)
            {
                response = responseNode.Value;
                responseLocation = responseNode.Location;
            }
            else if (header.Response is not null)
            {
                response = header.Response;
                responseLocation = header.ResponseLocation;
            }
            else if (!header.Misspelt.Contains("response") && !keys.Misspelt.Contains("response"))
            {
                diagnostics.ResponseNeeded(b.Location);
            }

            var factorKey = kind.OwnKeys.Contains("by") && keys.Has("by") ? "by" : "factors";
            if (keys.ScalarList(factorKey) is { } list)
            {
                factorsLocation = keys.KeyLocation(factorKey);
                foreach (var f in list)
                {
                    var spec = header.Factor(f.Value);
                    if (spec is null)
                    {
                        ReportUnknownFactor(f, header, context, diagnostics);
                    }
                    else if (factors.Contains(spec))
                    {
                        diagnostics.DuplicateFactorInList(f.Location, f.Value);
                    }
                    else
                    {
                        factors.Add(spec);
                    }
                }
            }
            else if (!kind.NamesOwnFactors)
            {
                factors.AddRange(DefaultFactors(header, kind));
            }

            if (kind.NeedsFactors && factors.Count == 0 && diagnostics.Items.Count == before && !context.FailedQuietly)
            {
                diagnostics.FactorsNeeded(b.Location, kind.Name);
            }

            switch (keys.Node("where"))
            {
                case null or YScalar { IsNull: true }:
                    break;
                case YMapping wm:
                    foreach (var e in wm.Entries)
                    {
                        var spec = header.Factor(e.Key.Value);
                        if (spec is null)
                        {
                            ReportUnknownFactor(e.Key, header, context, diagnostics);
                            continue;
                        }

                        var levels = e.Value switch
                        {
                            YScalar s => [s],
                            YSequence seq => seq.Items.OfType<YScalar>().ToList(),
                            _ => [],
                        };
                        if (levels.Count == 0)
                        {
                            diagnostics.ExpectedList(e.Value.Location, $"'where: {e.Key.Value}' (a level or a list of levels)");
                            continue;
                        }

                        if (spec.Levels is { } declared)
                        {
                            foreach (var l in levels.Where(l => !declared.Contains(l.Value)))
                            {
                                diagnostics.UnknownLevelInFilter(l.Location, spec.Name, l.Value, DiagnosticBag.Nearest(l.Value, declared));
                            }
                        }

                        where.Add(new WhereFilter(spec, [.. levels.Select(l => l.Value)], e.Key.Location));
                    }

                    break;
                case var other:
                    diagnostics.ExpectedMapping(other.Location, "'where' (factor -> level or list of levels)");
                    break;
            }
        }

        if (!kind.UsesData)
        {
            foreach (var key in new[] { "data", "response", "factors", "where" }.Where(keys.Has))
            {
                diagnostics.KeyNotUsed(keys.KeyLocation(key), key, kind.Name);
            }
        }

        if (kind is Kinds.AnovaKind)
        {
            foreach (var f in factors.Where(f => !f.IsModelFactor))
            {
                diagnostics.WholePlotColumnInModel(factorsLocation, f.Name);
            }
        }

        var caption = keys.String("caption");
        var options = kind.BindOptions(keys, context, diagnostics);
        if (diagnostics.Items.Count > before || context.FailedQuietly)
        {
            return null;
        }

        var bound = new BoundBlock
        {
            Id = id,
            Kind = kind,
            Syntax = b,
            Data = data,
            Response = response,
            ResponseLocation = responseLocation,
            Factors = factors,
            FactorsLocation = factorsLocation,
            Where = where,
            Caption = caption,
            Options = options,
            WholePlots = kind is Kinds.AnovaKind && factors.Any(f => f.Layout.Plot != Statistics.Designs.PlotLevel.Unit)
                ? header.Factors.FirstOrDefault(f => f.Layout.NamesWholePlots)
                : null,
        };
        kind.CheckBound(bound, header, diagnostics);
        return diagnostics.Items.Count > before ? null : bound;
    }

    /// <summary>
    /// The factors of a block that names none: for an anova block every factor of the model (not
    /// the column naming the whole plots); for other kinds, when the header declares a layout, the
    /// treatments (a summary by block and variety is rarely what is wanted), else every factor.
    /// </summary>
    private static List<FactorSpec> DefaultFactors(StudyHeader header, Kinds.BlockKind kind)
    {
        var model = header.Factors.Where(f => f.IsModelFactor).ToList();
        if (kind is Kinds.AnovaKind || !header.Factors.Any(f => f.Layout.IsDeclared))
        {
            return model;
        }

        var treatments = model.Where(f => f.Layout.Role == Statistics.Designs.FactorRole.Treatment).ToList();
        return treatments.Count > 0 ? treatments : model;
    }

    /// <summary>
    /// An unknown factor name, reported once however many blocks use it, and not at all when the
    /// header's own 'factors' key was misspelt (that is the one mistake). The block still fails.
    /// </summary>
    private static void ReportUnknownFactor(YScalar name, StudyHeader header, BindContext context, DiagnosticBag diagnostics)
    {
        context.FailQuietly();
        if (header.Misspelt.Contains("factors") || !context.ReportedNames.Add("factor:" + name.Value))
        {
            return;
        }

        diagnostics.UnknownFactor(name.Location, name.Value, DiagnosticBag.Nearest(name.Value, header.Factors.Select(x => x.Name)));
    }

    /// <summary>A block that works on an anova block's model: data and factors come from there.</summary>
    private static BoundBlock? BindOnAnova(AnalysisBlockSyntax b, string id, BlockKind kind, KeyReader keys, BindContext context, DiagnosticBag diagnostics, int before)
    {
        var anova = context.AnovaOf(keys, kind.Name, diagnostics);
        if (anova is not null)
        {
            foreach (var key in new[] { "data", "response", "factors", "where" })
            {
                if (keys.Has(key))
                {
                    diagnostics.KeyTakenFromAnova(keys.KeyLocation(key), key, anova.Id);
                }
            }
        }

        var caption = keys.String("caption");
        var options = kind.BindOptions(keys, context with { }, diagnostics);
        if (anova is null || diagnostics.Items.Count > before)
        {
            return null;
        }

        return new BoundBlock
        {
            Id = id,
            Kind = kind,
            Syntax = b,
            Data = anova.Data,
            Response = anova.Response,
            ResponseLocation = anova.ResponseLocation,
            Factors = anova.Factors,
            FactorsLocation = anova.FactorsLocation,
            Where = anova.Where,
            Caption = caption,
            Options = options,
            Of = anova,
        };
    }
}

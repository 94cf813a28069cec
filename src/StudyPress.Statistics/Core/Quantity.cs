using System.Globalization;

namespace StudyPress.Statistics;

/// <summary>
/// A computed statistic that is either a finite number or "not defined" with a reason a user can
/// read (a group of one has no standard deviation; F is not defined when the residual variance is
/// zero). The engine never hands NaN or an infinity to the compiler: every procedure returns
/// <see cref="Quantity"/> where the data can make a value undefined.
/// </summary>
public readonly record struct Quantity
{
    private Quantity(double value, string? reason)
    {
        Value = value;
        Reason = reason;
    }

    /// <summary>The value; only meaningful when <see cref="IsDefined"/>.</summary>
    public double Value { get; }

    /// <summary>Why the value is not defined; null when it is.</summary>
    public string? Reason { get; }

    public bool IsDefined => Reason is null;

    /// <summary>A defined value. Non-finite input becomes undefined with a generic reason.</summary>
    public static Quantity Of(double value) =>
        double.IsFinite(value) ? new Quantity(value, null) : new Quantity(double.NaN, "the value is not finite for these data");

    public static Quantity Undefined(string reason) => new(double.NaN, reason);

    /// <summary>Applies <paramref name="f"/> to a defined value; keeps the reason otherwise.</summary>
    public Quantity Map(Func<double, double> f) => IsDefined ? Of(f(Value)) : this;

    public override string ToString() =>
        IsDefined ? Value.ToString("R", CultureInfo.InvariantCulture) : "not defined (" + Reason + ")";
}

using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for Holt's linear trend method (double exponential smoothing), optionally with a damped trend:
/// <para>ℓ(t) = α·y(t) + (1−α)·(ℓ(t−1) + φ·b(t−1))</para>
/// <para>b(t) = β·(ℓ(t) − ℓ(t−1)) + (1−β)·φ·b(t−1)</para>
/// <para>F(t+h) = ℓ(t) + (φ + φ² + … + φʰ)·b(t)</para>
/// with α the level weight, β the trend weight and φ the damping (φ = 1: no damping, F(t+h) = ℓ(t) + h·b(t)).
/// </summary>
/// <remarks>
/// <para><b>Letters in the sources.</b> The parameters are named in words because the letters differ:</para>
/// <list type="bullet">
/// <item><description>NIST/SEMATECH e-Handbook §6.4.3.3 (double exponential smoothing): S(t) = α·y(t) +
/// (1−α)·(S(t−1) + b(t−1)), b(t) = γ·(S(t) − S(t−1)) + (1−γ)·b(t−1), F(t+1) = S(t) + b(t). These are the equations
/// above with φ = 1: level weight = NIST α, trend weight = NIST γ.</description></item>
/// <item><description>Hyndman &amp; Athanasopoulos, <i>Forecasting: Principles and Practice</i> (1st ed.), §7.2 and
/// §7.4 (damped; section numbers from memory): level weight = α, trend weight = β*, damping = φ.</description></item>
/// <item><description>The ETS(A,A,N) / ETS(A,Ad,N) innovations model (Hyndman, Koehler, Ord &amp; Snyder 2008)
/// writes the trend equation as b(t) = φ·b(t−1) + β·ε(t) with ε(t) the one-step error; its β is
/// level weight × trend weight (α·β* in FPP's letters), because ℓ(t) − ℓ(t−1) − φ·b(t−1) = α·ε(t).</description></item>
/// </list>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record HoltOptions : ForecasterOptions
{
    /// <summary>Creates Holt options.</summary>
    /// <param name="levelWeight">The level weight α (NIST α, FPP α), in (0, 1].</param>
    /// <param name="trendWeight">The trend weight (NIST γ, FPP β*), in [0, 1]; 0 keeps the starting trend (damped by φ).</param>
    /// <param name="damping">The damping φ, in (0, 1]; the default 1 is Holt's undamped method.</param>
    /// <param name="start">How the first level and trend are set; the default is <see cref="HoltStart.FirstTwoActuals"/> (FPP 1st ed.).</param>
    /// <exception cref="ArgumentOutOfRangeException">A weight or the damping is out of range or NaN.</exception>
    public HoltOptions(double levelWeight, double trendWeight, double damping = 1.0, HoltStart start = default)
    {
        if (!(levelWeight > 0 && levelWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(levelWeight), levelWeight, "the level weight (alpha) must be greater than 0 and at most 1");
        }

        if (!(trendWeight >= 0 && trendWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(trendWeight), trendWeight, "the trend weight (NIST gamma, FPP beta*) must be between 0 and 1");
        }

        if (!(damping > 0 && damping <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(damping), damping, "the damping (phi) must be greater than 0 and at most 1; 1 means no damping");
        }

        LevelWeight = levelWeight;
        TrendWeight = trendWeight;
        Damping = damping;
        Start = start;
    }

    /// <summary>The level weight α in (0, 1].</summary>
    public double LevelWeight { get; }

    /// <summary>The trend weight in [0, 1] (NIST γ, FPP β*).</summary>
    public double TrendWeight { get; }

    /// <summary>The damping φ in (0, 1]; 1 means no damping.</summary>
    public double Damping { get; }

    /// <summary>The start rule for the first level and trend.</summary>
    public HoltStart Start { get; }

    /// <inheritdoc/>
    public override string MethodName
    {
        get
        {
            string damped = Damping == 1.0 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $", damping {Damping}");
            string start = Start.Kind == HoltStartKind.FirstTwoActuals ? string.Empty : $", {Start}";
            return string.Create(CultureInfo.InvariantCulture, $"Holt({LevelWeight}, {TrendWeight}{damped}{start})");
        }
    }

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new Holt(this);
}

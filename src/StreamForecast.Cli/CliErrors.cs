namespace StreamForecast.Cli;

/// <summary>The tool's exit codes; listed in <c>--help</c> and the README.</summary>
internal static class ExitCodes
{
    /// <summary>The command completed (skipped rows, if any, were counted and reported).</summary>
    public const int Ok = 0;

    /// <summary>A usage mistake: an unknown command or option, a bad option value, or an unreadable method-configuration file, or one tuned on another period calendar without <c>--force</c>.</summary>
    public const int Usage = 1;

    /// <summary>
    /// A data error in an input CSV, named by file, line and column where it is one row's: a missing file or column, a
    /// malformed row (with <c>--on-bad-row stop</c>: a bad or ambiguous timestamp, one outside the period calendar's
    /// range, a quantity that is not a number or is outside ±1e15, bad quoting), rows spanning more than
    /// <c>--max-periods</c>, no usable rows, an output file <c>tune</c> would replace without <c>--force</c>, or (with <c>--on-bad-row stop</c>) an event or period the engine dropped.
    /// </summary>
    public const int Data = 2;

    /// <summary>An unexpected failure inside the tool (a bug): reported in one line, without a stack trace.</summary>
    public const int Internal = 3;

    public const string HelpText =
        "Exit codes: 0 ok; 1 usage error (bad option, unreadable config file, or one tuned on another period calendar without --force); 2 data error (missing file or column, " +
        "malformed row with --on-bad-row stop, named by file, line and column; rows spanning more than --max-periods; no usable rows; " +
        "an existing methods file tune would replace without --force; " +
        "an event or period dropped by the engine with --on-bad-row stop); 3 unexpected internal failure.";
}

/// <summary>A mistake in how the tool was called; exit code 1.</summary>
internal sealed class UsageException(string message) : Exception(message);

/// <summary>A problem in the input data; exit code 2.</summary>
internal sealed class DataException(string message) : Exception(message);

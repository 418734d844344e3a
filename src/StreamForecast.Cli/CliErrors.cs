namespace StreamForecast.Cli;

/// <summary>The tool's exit codes; listed in <c>--help</c> and the README.</summary>
internal static class ExitCodes
{
    /// <summary>The command completed (skipped rows, if any, were counted and reported).</summary>
    public const int Ok = 0;

    /// <summary>A usage mistake: an unknown command or option, a bad option value, or an unreadable method-configuration file.</summary>
    public const int Usage = 1;

    /// <summary>A data error in an input CSV: a missing file or column, a malformed row (with <c>--on-bad-row stop</c>), or no usable rows.</summary>
    public const int Data = 2;

    /// <summary>An unexpected failure inside the tool (a bug): reported in one line, without a stack trace.</summary>
    public const int Internal = 3;

    public const string HelpText =
        "Exit codes: 0 ok; 1 usage error (bad option, unreadable config file); 2 data error (missing file or column, " +
        "malformed row with --on-bad-row stop, no usable rows); 3 unexpected internal failure.";
}

/// <summary>A mistake in how the tool was called; exit code 1.</summary>
internal sealed class UsageException(string message) : Exception(message);

/// <summary>A problem in the input data; exit code 2.</summary>
internal sealed class DataException(string message) : Exception(message);

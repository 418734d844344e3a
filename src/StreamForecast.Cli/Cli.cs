using Spectre.Console;

namespace StreamForecast.Cli;

/// <summary>Runs a command's work and turns failures into a one-line message and an exit code; never a stack trace.</summary>
internal static class Cli
{
    public static async Task<int> Guard(Func<Task<int>> work)
    {
        try
        {
            return await work().ConfigureAwait(false);
        }
        catch (UsageException e)
        {
            Error("usage", e.Message);
            return ExitCodes.Usage;
        }
        catch (DataException e)
        {
            Error("data", e.Message);
            return ExitCodes.Data;
        }
        catch (OperationCanceledException)
        {
            Error("cancelled", "the command was cancelled.");
            return ExitCodes.Internal;
        }
#pragma warning disable CA1031 // the tool's last line of defence: report any failure in one line instead of a stack trace
        catch (Exception e)
#pragma warning restore CA1031
        {
            Error("internal", $"{e.GetType().Name}: {e.Message}");
            return ExitCodes.Internal;
        }
    }

    private static void Error(string kind, string message) =>
        Console.Error.WriteLine($"streamforecast-cli: {kind} error: {message}");
}

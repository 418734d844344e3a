using Spectre.Console;

namespace StreamForecast.Cli;

/// <summary>Receives progress of a long step: a total, then the amount done so far.</summary>
internal interface IProgressSink
{
    void Start(long total);

    void Report(long done);
}

/// <summary>Shows a progress bar on an interactive terminal; does nothing when output is redirected (pipes, files, tests).</summary>
internal static class ProgressDisplay
{
    /// <summary>Whether a progress bar is shown: only when standard output and standard error are a terminal.</summary>
    public static bool IsInteractive => !Console.IsOutputRedirected && !Console.IsErrorRedirected;

    public static T Run<T>(string label, Func<IProgressSink, T> work)
    {
        if (!IsInteractive)
        {
            return work(Silent.Instance);
        }

        T result = default!;
        AnsiConsole.Progress()
            .AutoClear(true)
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new RemainingTimeColumn())
            .Start(context => result = work(new Bar(context.AddTask(Markup.Escape(label)))));
        return result;
    }

    public static async Task<T> RunAsync<T>(string label, Func<IProgressSink, Task<T>> work)
    {
        if (!IsInteractive)
        {
            return await work(Silent.Instance).ConfigureAwait(false);
        }

        T result = default!;
        await AnsiConsole.Progress()
            .AutoClear(true)
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new RemainingTimeColumn())
            .StartAsync(async context => result = await work(new Bar(context.AddTask(Markup.Escape(label)))).ConfigureAwait(false))
            .ConfigureAwait(false);
        return result;
    }

    private sealed class Silent : IProgressSink
    {
        public static readonly Silent Instance = new();

        public void Start(long total)
        {
        }

        public void Report(long done)
        {
        }
    }

    private sealed class Bar(ProgressTask task) : IProgressSink
    {
        public void Start(long total) => task.MaxValue = Math.Max(1, total);

        public void Report(long done) => task.Value = done;
    }
}

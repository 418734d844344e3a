namespace StreamForecast.Samples.PointOfSale;

/// <summary>The server's start-up log lines.</summary>
internal static partial class StartLog
{
    /// <summary>Says where the checkpoints and the input log are kept, and how to move them.</summary>
    /// <param name="logger">The application's logger.</param>
    /// <param name="file">The checkpoint file (the input log shares it).</param>
    [LoggerMessage(EventId = 1, Level = LogLevel.Information, Message = "Checkpoints and the input log of sales: {File} (move them with --data <folder> or --StreamForecast:Checkpoints:File=<file>)")]
    public static partial void DataLocation(ILogger logger, string file);
}

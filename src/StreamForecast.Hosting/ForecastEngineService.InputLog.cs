using System.Globalization;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using StreamForecast.Alerts;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <content>Truncating the input log behind the checkpoints.</content>
internal sealed partial class ForecastEngineService<TKey>
{
    private async Task TruncateInputLogAsync(long position, CancellationToken cancellationToken)
    {
        // Keep the input of every checkpoint the store may fall back to: truncate before the oldest retained position.
        _checkpointPositions.Enqueue(position);
        while (_checkpointPositions.Count > Math.Max(1, _options.Checkpoints.RetainCount))
        {
            _checkpointPositions.Dequeue();
        }

        long before = _checkpointPositions.Peek();
        try
        {
            await _log!.TruncateAsync(before, cancellationToken).ConfigureAwait(false);
            LogTruncated(_logger, before);
        }
        catch (Exception ex) when (ex is not OperationCanceledException)
        {
            LogTruncateFailed(_logger, before, ex);
        }
    }
}

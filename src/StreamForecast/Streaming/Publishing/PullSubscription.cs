using System.Threading.Channels;

namespace StreamForecast.Streaming;

/// <summary>
/// A pull reader of a stream of results, with backpressure: while its buffer is full, publishing waits instead of
/// dropping. Read it through <see cref="Reader"/> or <see cref="ReadAllAsync"/>, and dispose it when done so it no
/// longer holds the publisher back.
/// </summary>
/// <typeparam name="T">The item type.</typeparam>
/// <remarks>
/// <para><b>Completion.</b> When the publisher completes, the reader yields every buffered item and then ends (or,
/// when the publisher completed with an error, throws that error after the buffered items).</para>
/// <para><b>A reader that stops reading stalls every publisher</b> once its buffer fills, by design. Dispose it
/// (or cancel <see cref="ReadAllAsync"/>'s enumeration) to release them.</para>
/// <para><b>Thread safety.</b> Thread-safe; several consumers may read the same reader and then share its items.</para>
/// </remarks>
internal sealed class PullSubscription<T> : IDisposable
{
    private readonly Channel<T> _channel;
    private readonly Action<PullSubscription<T>> _detach;
    private int _disposed;
    private volatile bool _closed;

    internal PullSubscription(long id, int capacity, Action<PullSubscription<T>> detach)
    {
        Id = id;
        Capacity = capacity;
        _detach = detach;
        _channel = Channel.CreateBounded<T>(new BoundedChannelOptions(capacity)
        {
            FullMode = BoundedChannelFullMode.Wait,
            SingleReader = false,
            SingleWriter = false,
            AllowSynchronousContinuations = false,
        });
    }

    /// <summary>A number that identifies this reader within its publisher.</summary>
    public long Id { get; }

    /// <summary>How many unread items this reader may hold before publishing waits.</summary>
    public int Capacity { get; }

    /// <summary>The channel reader to take items from.</summary>
    public ChannelReader<T> Reader => _channel.Reader;

    /// <summary>Reads every item until the publisher completes, this reader is disposed, or the token is cancelled.</summary>
    /// <param name="cancellationToken">Stops the enumeration with <see cref="OperationCanceledException"/>.</param>
    /// <returns>The items, in the order they were published by each publishing thread.</returns>
    /// <remarks>Breaking out of the enumeration does not dispose the reader; dispose it to release the publisher.</remarks>
    public IAsyncEnumerable<T> ReadAllAsync(CancellationToken cancellationToken = default) => _channel.Reader.ReadAllAsync(cancellationToken);

    /// <summary>
    /// Detaches the reader: publishing no longer waits for it, items still buffered can be read, and then the reader
    /// ends. A publisher waiting for room in this reader stops waiting. Idempotent; never blocks.
    /// </summary>
    public void Dispose()
    {
        if (Interlocked.Exchange(ref _disposed, 1) == 0)
        {
            _closed = true;
            _detach(this);
            _channel.Writer.TryComplete();
        }
    }

    /// <summary>Whether the buffer has room for one more item. Only publishers add items, so under the publisher's
    /// write lock the answer can only change from false to true.</summary>
    internal bool HasRoom => _channel.Reader.Count < Capacity;

    internal ChannelWriter<T> Writer => _channel.Writer;

    /// <summary>Whether the reader takes no more items (disposed, or the publisher completed).</summary>
    internal bool IsClosed => _closed;

    internal void Complete(Exception? error)
    {
        _closed = true;
        _channel.Writer.TryComplete(error);
    }
}

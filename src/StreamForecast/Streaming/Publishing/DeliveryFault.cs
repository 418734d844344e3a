namespace StreamForecast.Streaming;

/// <summary>Which user callback threw while results were being delivered.</summary>
internal enum DeliveryFaultSource
{
    /// <summary>The subscriber's <see cref="IObserver{T}.OnNext"/> threw; the item counts as delivered to nobody.</summary>
    OnNext,

    /// <summary>The subscriber's <see cref="IObserver{T}.OnCompleted"/> threw.</summary>
    OnCompleted,

    /// <summary>The subscriber's <see cref="IObserver{T}.OnError"/> threw.</summary>
    OnError,

    /// <summary>The dropped-item callback given to the publisher threw.</summary>
    DroppedItemCallback,
}

/// <summary>
/// An exception thrown by user code during delivery. It is caught, counted on the subscription and reported;
/// delivery goes on for that subscriber and every other one.
/// </summary>
/// <param name="Subscription">The subscription whose callback threw.</param>
/// <param name="Source">Which callback threw.</param>
/// <param name="Exception">What it threw.</param>
/// <remarks>An immutable value; safe to pass between threads.</remarks>
internal readonly record struct DeliveryFault(DeliverySubscription Subscription, DeliveryFaultSource Source, Exception Exception);

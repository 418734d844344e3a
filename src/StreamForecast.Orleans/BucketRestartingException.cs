namespace StreamForecast.Orleans;

/// <summary>Thrown when a bucket has dropped its in-memory state after a failure; the call was not applied, retry it.</summary>
[GenerateSerializer]
[Alias("StreamForecast.Orleans.BucketRestartingException")]
public sealed class BucketRestartingException : Exception
{
    /// <summary>Creates the exception.</summary>
    public BucketRestartingException()
        : base("The bucket is reloading its stored state after a failure; the call was not applied. Retry it with the same id.")
    {
    }

    /// <summary>Creates the exception with a message.</summary>
    /// <param name="message">The message.</param>
    public BucketRestartingException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and a cause.</summary>
    /// <param name="message">The message.</param>
    /// <param name="innerException">The cause.</param>
    public BucketRestartingException(string message, Exception innerException)
        : base(message, innerException)
    {
    }
}

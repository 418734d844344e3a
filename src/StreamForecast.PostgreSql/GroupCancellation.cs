namespace StreamForecast.PostgreSql;

/// <summary>
/// The cancellation of a group's transaction: signalled once every save of the group has been cancelled by its caller,
/// never when one of them cannot be (its caller passed no cancellable token). Each cancelled caller then gets an
/// <see cref="OperationCanceledException"/>; while at least one caller still waits, the transaction goes on for all.
/// </summary>
internal sealed class GroupCancellation : IDisposable
{
    private readonly CancellationTokenSource? _source;
    private readonly List<CancellationTokenRegistration> _registrations = [];
    private int _notCancelled;

    public GroupCancellation(List<PendingSave> group)
    {
        foreach (PendingSave save in group)
        {
            if (!save.CancellationToken.CanBeCanceled)
            {
                return; // Token stays CancellationToken.None.
            }
        }

        _source = new CancellationTokenSource();
        _notCancelled = group.Count;
        foreach (PendingSave save in group)
        {
            _registrations.Add(save.CancellationToken.Register(static state => ((GroupCancellation)state!).OneCancelled(), this));
        }
    }

    /// <summary>Cancelled once every caller has cancelled.</summary>
    public CancellationToken Token => _source?.Token ?? CancellationToken.None;

    public void Dispose()
    {
        foreach (CancellationTokenRegistration registration in _registrations)
        {
            registration.Dispose();
        }

        _source?.Dispose();
    }

    private void OneCancelled()
    {
        if (Interlocked.Decrement(ref _notCancelled) == 0)
        {
            try
            {
                _source!.Cancel();
            }
            catch (ObjectDisposedException)
            {
                // The group ended meanwhile.
            }
        }
    }
}

namespace StreamForecast.Selection.Internal;

/// <summary>Runs one independent, sequential computation per key on a bounded number of workers.</summary>
/// <remarks>
/// Each key's result depends only on its own input (no shared mutable state, no shared random numbers), and results
/// are stored by input position, so the output is the same, element by element, whatever the scheduling or the degree
/// of parallelism.
/// </remarks>
internal static class KeyedParallel
{
    public static TResult[] Run<TInput, TResult>(
        IReadOnlyList<TInput> inputs,
        Func<TInput, TResult> work,
        int maxDegreeOfParallelism,
        CancellationToken cancellationToken)
    {
        var results = new TResult[inputs.Count];
        if (results.Length == 0)
        {
            cancellationToken.ThrowIfCancellationRequested();
            return results;
        }

        var parallel = new ParallelOptions
        {
            MaxDegreeOfParallelism = maxDegreeOfParallelism,
            CancellationToken = cancellationToken,
        };
        Parallel.For(0, results.Length, parallel, i => results[i] = work(inputs[i]));
        return results;
    }
}

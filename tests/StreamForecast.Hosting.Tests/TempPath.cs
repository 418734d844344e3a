namespace StreamForecast.Hosting.Tests;

/// <summary>A fresh temporary directory, deleted with everything in it on dispose.</summary>
internal sealed class TempPath : IDisposable
{
    public TempPath()
    {
        Directory = Path.Combine(Path.GetTempPath(), "streamforecast-tests-" + Guid.NewGuid().ToString("N"));
        System.IO.Directory.CreateDirectory(Directory);
    }

    public string Directory { get; }

    public string File(string name) => Path.Combine(Directory, name);

    public void Dispose()
    {
        try
        {
            System.IO.Directory.Delete(Directory, recursive: true);
        }
        catch (IOException)
        {
            // Best effort: the OS temp cleaner removes leftovers.
        }
    }
}

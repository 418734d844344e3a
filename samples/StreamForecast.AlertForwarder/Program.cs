using StreamForecast.Samples.AlertForwarder;

// A drift-alert forwarder beside an engine run by the generic host. The run plays invented bakery sales in two
// process lifetimes: the first "crashes" after its last checkpoint, the second restores, replays the input from the
// checkpoint's position, and the forwarder drops the repeated transitions. A deliberately slow subscriber and a
// failing one run alongside, to show that neither slows or breaks ingestion. Bounded (a few seconds); CI runs it.
string data = args.Length > 0 ? args[0] : Path.Combine(Path.GetTempPath(), "streamforecast-alerts-" + Guid.NewGuid().ToString("N"));
bool temporary = args.Length == 0;
try
{
    await ForwarderRun.RunAsync(data, Console.Out);
    return 0;
}
finally
{
    if (temporary)
    {
        Directory.Delete(data, recursive: true);
    }
}

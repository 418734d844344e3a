namespace StreamForecast.Samples.SensorThroughput;

/// <summary>One reading a device publishes: how many messages it handled in the 10 s ending at <see cref="At"/>.</summary>
/// <param name="Device">The device name (also the topic segment).</param>
/// <param name="Sequence">The device's reading number, from 0; with the device name it is the event id.</param>
/// <param name="At">The simulated event time of the reading.</param>
/// <param name="Messages">Messages handled in the reading's 10 s.</param>
public sealed record ThroughputReading(string Device, long Sequence, DateTimeOffset At, int Messages);

/// <summary>
/// An invented fleet of four gateways. Time is simulated: a reading every 10 s from <see cref="Start"/>, six to a
/// 1-minute interval, for <see cref="Intervals"/> intervals. <c>press-c</c> is offline (publishes nothing) for the
/// intervals <see cref="OfflineFrom"/> to <see cref="OfflineUntil"/> − 1; <c>kiln-d</c>'s rate climbs by 2% an
/// interval from <see cref="DriftFrom"/> on. All names and numbers are made up.
/// </summary>
public static class FleetScenario
{
    /// <summary>The simulated start.</summary>
    public static readonly DateTimeOffset Start = new(2025, 9, 1, 8, 0, 0, TimeSpan.Zero);

    /// <summary>The bucket length.</summary>
    public static readonly TimeSpan Interval = TimeSpan.FromMinutes(1);

    /// <summary>Readings per interval (one every 10 s).</summary>
    public const int ReadingsPerInterval = 6;

    /// <summary>Intervals simulated.</summary>
    public const int Intervals = 60;

    /// <summary>The first interval press-c misses.</summary>
    public const int OfflineFrom = 20;

    /// <summary>The interval press-c is back in.</summary>
    public const int OfflineUntil = 32;

    /// <summary>The first interval of kiln-d's upward drift.</summary>
    public const int DriftFrom = 36;

    /// <summary>The device that goes offline.</summary>
    public const string OfflineDevice = "press-c";

    /// <summary>The device whose rate drifts upward.</summary>
    public const string DriftingDevice = "kiln-d";

    /// <summary>The devices and their steady rate in messages per 10 s.</summary>
    public static IReadOnlyList<(string Device, double Rate)> Devices { get; } =
        [("dock-a", 120), ("dock-b", 45), (OfflineDevice, 80), (DriftingDevice, 60)];

    /// <summary>The readings one device publishes, in order.</summary>
    /// <param name="device">The device name.</param>
    /// <param name="rate">Its steady rate.</param>
    /// <param name="seed">The seed of its noise.</param>
    /// <returns>Its readings.</returns>
    public static List<ThroughputReading> Readings(string device, double rate, int seed)
    {
        var rng = new Random(seed);
        var list = new List<ThroughputReading>(Intervals * ReadingsPerInterval);
        long sequence = 0;
        for (int i = 0; i < Intervals; i++)
        {
            double mean = device == DriftingDevice && i >= DriftFrom ? rate * Math.Pow(1.02, i - DriftFrom + 1) : rate;
            for (int r = 0; r < ReadingsPerInterval; r++)
            {
                double noisy = mean + ((rng.NextDouble() - 0.5) * 2 * Math.Sqrt(mean));
                if (device == OfflineDevice && i >= OfflineFrom && i < OfflineUntil)
                {
                    continue; // offline: nothing is sent, and the readings are not numbered
                }

                DateTimeOffset at = Start + (Interval * i) + TimeSpan.FromSeconds(10 * r);
                list.Add(new ThroughputReading(device, sequence++, at, (int)Math.Round(noisy)));
            }
        }

        return list;
    }
}

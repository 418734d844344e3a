using System.Text.Json;
using Orleans.Runtime;

namespace StreamForecast.Orleans.PostgreSql;

/// <summary>
/// A membership entry as the JSON text stored in its row. Times are UTC ticks; addresses are Orleans' parsable form.
/// </summary>
/// <remarks>Thread safety: stateless; thread-safe.</remarks>
internal static class MembershipEntryText
{
    public static string Write(MembershipEntry entry)
    {
        var suspects = new List<Suspect>();
        if (entry.SuspectTimes is not null)
        {
            foreach (Tuple<SiloAddress, DateTime> vote in entry.SuspectTimes)
            {
                suspects.Add(new Suspect(vote.Item1.ToParsableString(), Ticks(vote.Item2)));
            }
        }

        var stored = new Stored(
            entry.SiloAddress.ToParsableString(), (int)entry.Status, suspects, entry.ProxyPort, entry.HostName, entry.SiloName,
            entry.RoleName, entry.UpdateZone, entry.FaultZone, Ticks(entry.StartTime), Ticks(entry.IAmAliveTime));
        return JsonSerializer.Serialize(stored);
    }

    public static MembershipEntry Read(string text)
    {
        Stored stored = JsonSerializer.Deserialize<Stored>(text)
            ?? throw new InvalidDataException("A membership row holds no entry.");
        var suspects = new List<Tuple<SiloAddress, DateTime>>();
        foreach (Suspect vote in stored.Suspects)
        {
            suspects.Add(Tuple.Create(SiloAddress.FromParsableString(vote.Address), new DateTime(vote.Ticks, DateTimeKind.Utc)));
        }

        return new MembershipEntry
        {
            SiloAddress = SiloAddress.FromParsableString(stored.Address),
            Status = (SiloStatus)stored.Status,
            SuspectTimes = suspects,
            ProxyPort = stored.ProxyPort,
            HostName = stored.HostName ?? "",
            SiloName = stored.SiloName ?? "",
            RoleName = stored.RoleName,
            UpdateZone = stored.UpdateZone,
            FaultZone = stored.FaultZone,
            StartTime = new DateTime(stored.StartTicks, DateTimeKind.Utc),
            IAmAliveTime = new DateTime(stored.AliveTicks, DateTimeKind.Utc),
        };
    }

    private static long Ticks(DateTime time) => time.Kind == DateTimeKind.Local ? time.ToUniversalTime().Ticks : time.Ticks;

    private sealed record Suspect(string Address, long Ticks);

    private sealed record Stored(
        string Address, int Status, List<Suspect> Suspects, int ProxyPort, string? HostName, string? SiloName,
        string? RoleName, int UpdateZone, int FaultZone, long StartTicks, long AliveTicks);
}

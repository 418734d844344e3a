using System.Text.Json;
using System.Text.Json.Serialization;
using StreamForecast.Forecasting;

namespace StreamForecast.Cli;

/// <summary>
/// The method-configuration file written by <c>tune</c> and read by <c>replay</c> and <c>chart</c> (<c>--config</c>): JSON,
/// <c>{"format":"streamforecast-methods","version":1,"series":[{"key":"…","method":"ses:0.25",…}]}</c>. <c>method</c> uses the
/// tool's method text (<see cref="MethodSpec"/>); the other series fields (label, score, metric, improvesOnDefault) are
/// informational and ignored when read. Readers reject another format name or a version they do not know.
/// </summary>
internal sealed class MethodConfigFile
{
    public const string FormatName = "streamforecast-methods";
    public const int CurrentVersion = 1;

    private static readonly JsonSerializerOptions s_json = new()
    {
        WriteIndented = true,
        PropertyNamingPolicy = JsonNamingPolicy.CamelCase,
        DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
        NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals,
    };

    public string Format { get; set; } = FormatName;

    public int Version { get; set; } = CurrentVersion;

    public string? Calendar { get; set; }

    public int? SeasonLength { get; set; }

    public List<SeriesEntry> Series { get; set; } = [];

    public void Save(string path)
    {
        try
        {
            File.WriteAllText(path, JsonSerializer.Serialize(this, s_json));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new UsageException($"{path}: cannot write the configuration file ({e.Message}).");
        }
    }

    /// <summary>
    /// Reads a file and returns the method of each key; throws <see cref="UsageException"/> for anything unreadable.
    /// <paramref name="calendar"/> is the name of the period calendar the file was tuned on, or null when it records none.
    /// </summary>
    public static Dictionary<string, ForecasterOptions> Load(string path, out string? calendar)
    {
        MethodConfigFile? file;
        try
        {
            file = JsonSerializer.Deserialize<MethodConfigFile>(File.ReadAllText(path), s_json);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new UsageException($"{path}: cannot read the configuration file ({e.Message}).");
        }
        catch (JsonException e)
        {
            throw new UsageException($"{path}: not a valid configuration file (line {e.LineNumber + 1}: {e.Message.Split('.')[0]}).");
        }

        if (file is null || file.Format != FormatName)
        {
            throw new UsageException($"{path}: not a {FormatName} file (\"format\" must be \"{FormatName}\").");
        }

        if (file.Version != CurrentVersion)
        {
            throw new UsageException($"{path}: version {file.Version} is not supported; this tool reads version {CurrentVersion}.");
        }

        calendar = string.IsNullOrEmpty(file.Calendar) ? null : file.Calendar;
        var methods = new Dictionary<string, ForecasterOptions>(StringComparer.Ordinal);
        foreach (SeriesEntry entry in file.Series)
        {
            if (string.IsNullOrEmpty(entry.Key) || string.IsNullOrEmpty(entry.Method))
            {
                throw new UsageException($"{path}: every series needs a \"key\" and a \"method\".");
            }

            try
            {
                methods[entry.Key] = MethodSpec.Parse(entry.Method);
            }
            catch (UsageException e)
            {
                throw new UsageException($"{path}, series '{entry.Key}': {e.Message}");
            }
        }

        return methods;
    }

    internal sealed class SeriesEntry
    {
        public string Key { get; set; } = string.Empty;

        public string Method { get; set; } = string.Empty;

        public string? Label { get; set; }

        public string? Metric { get; set; }

        public double? Score { get; set; }

        public bool? ImprovesOnDefault { get; set; }
    }
}

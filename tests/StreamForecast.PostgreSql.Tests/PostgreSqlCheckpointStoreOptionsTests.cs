using Npgsql;

namespace StreamForecast.PostgreSql.Tests;

// Checks that need no server, so they run (and fail or pass) whether or not the throwaway server starts.
public sealed class PostgreSqlCheckpointStoreOptionsTests
{
    [Theory]
    [InlineData("")]
    [InlineData("   ")]
    [InlineData("Hots=127.0.0.1")]
    public void Constructor_BadConnectionString_ThrowsArgumentException(string connectionString) =>
        Assert.ThrowsAny<ArgumentException>(() => new PostgreSqlCheckpointStore(connectionString));

    [Fact]
    public void Constructor_NullDataSource_ThrowsArgumentNull() =>
        Assert.Equal("dataSource", Assert.Throws<ArgumentNullException>(() => new PostgreSqlCheckpointStore((NpgsqlDataSource)null!)).ParamName);

    [Theory]
    [InlineData(0, 1L)]
    [InlineData(1001, 1L)]
    [InlineData(1, 0L)]
    [InlineData(1, 1_000_000_001L)]
    public void Options_CountOrLengthOutOfRange_Throw(int retainCount, long maxSnapshotLength) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => new PostgreSqlCheckpointStoreOptions(retainCount, maxSnapshotLength));

    [Fact]
    public void Options_Defaults_AreDocumentedValues()
    {
        PostgreSqlCheckpointStoreOptions options = PostgreSqlCheckpointStoreOptions.Default;

        Assert.Equal(3, options.RetainCount);
        Assert.Equal(512L << 20, options.MaxSnapshotLength);
        Assert.Equal("", options.StreamName);
        Assert.Equal("streamforecast", options.SchemaName);
    }

    [Theory]
    [InlineData("")]
    [InlineData("Checkpoints")]      // upper case would need quoting
    [InlineData("1st")]
    [InlineData("pg_checkpoints")]   // reserved prefix
    [InlineData("bakery-checkpoints")]
    [InlineData("bakery checkpoints")]
    [InlineData("café")]
    [InlineData("a\"; DROP TABLE x; --")]
    [InlineData("abcdefghijabcdefghijabcdefghijabcdefghijabcdefghijabcdefghij1234")] // 64 characters
    public void Options_SchemaNameNotAllowed_ThrowsNamingTheRule(string schemaName)
    {
        var ex = Assert.Throws<ArgumentException>(() => new PostgreSqlCheckpointStoreOptions(schemaName: schemaName));

        Assert.Equal("schemaName", ex.ParamName);
        Assert.Contains("1 to 63 characters from a-z, 0-9 and '_'", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("_")]
    [InlineData("bakery_checkpoints_2")]
    [InlineData("abcdefghijabcdefghijabcdefghijabcdefghijabcdefghijabcdefghij123")] // 63 characters
    public void Options_SchemaNameAllowed_IsKept(string schemaName) =>
        Assert.Equal(schemaName, new PostgreSqlCheckpointStoreOptions(schemaName: schemaName).SchemaName);

    [Theory]
    [InlineData("a\nb")]
    [InlineData("\0")]
    [InlineData("del\u007F")]
    public void Options_StreamNameWithControlCharacter_Throws(string streamName)
    {
        var ex = Assert.Throws<ArgumentException>(() => new PostgreSqlCheckpointStoreOptions(streamName: streamName));

        Assert.Equal("streamName", ex.ParamName);
        Assert.Contains("control character", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0xD800, "")]
    [InlineData(0xDC00, "y")]
    public void Options_StreamNameWithUnpairedSurrogate_Throws(int surrogate, string after)
    {
        var ex = Assert.Throws<ArgumentException>(() => new PostgreSqlCheckpointStoreOptions(streamName: "x" + (char)surrogate + after));

        Assert.Contains("unpaired surrogate", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Options_StreamNameTooLongOrNull_Throws()
    {
        Assert.Contains("at most 256", Assert.Throws<ArgumentException>(() => new PostgreSqlCheckpointStoreOptions(streamName: new string('s', 257))).Message, StringComparison.Ordinal);
        Assert.Equal("streamName", Assert.Throws<ArgumentNullException>(() => new PostgreSqlCheckpointStoreOptions(streamName: null!)).ParamName);
        Assert.Equal("schemaName", Assert.Throws<ArgumentNullException>(() => new PostgreSqlCheckpointStoreOptions(schemaName: null!)).ParamName);
    }
}

using Microsoft.Extensions.Hosting;
using StreamForecast.Orleans.PostgreSql;

namespace StreamForecast.PostgreSql.Tests;

// The registration checks its arguments when the silo or client is configured, before anything connects.
public sealed class PostgreSqlClusteringExtensionsTests
{
    private const string Valid = "Host=127.0.0.1;Database=forecasts;Username=silo";

    [Theory]
    [InlineData("")]
    [InlineData("   ")]
    [InlineData("Host=127.0.0.1;Colour=blue")]
    public void UsePostgreSqlClustering_SiloWithBadConnectionString_ThrowsArgumentException(string connectionString)
    {
        bool checkedNow = false;
        Host.CreateApplicationBuilder().UseOrleans(silo =>
        {
            Assert.ThrowsAny<ArgumentException>(() => silo.UsePostgreSqlClustering(connectionString));
            checkedNow = true;
        });

        Assert.True(checkedNow);
    }

    [Theory]
    [InlineData("pg_catalog")]
    [InlineData("Upper")]
    [InlineData("1st")]
    [InlineData("")]
    public void UsePostgreSqlClustering_ClientWithBadSchemaName_ThrowsArgumentException(string schemaName)
    {
        bool checkedNow = false;
        Host.CreateApplicationBuilder().UseOrleansClient(client =>
        {
            Assert.ThrowsAny<ArgumentException>(() => client.UsePostgreSqlClustering(Valid, schemaName));
            checkedNow = true;
        });

        Assert.True(checkedNow);
    }

    [Fact]
    public void UsePostgreSqlClustering_ValidArguments_ReturnsTheSameBuilder()
    {
        Host.CreateApplicationBuilder().UseOrleans(silo => Assert.Same(silo, silo.UsePostgreSqlClustering(Valid, "kiln_cluster")));
        Host.CreateApplicationBuilder().UseOrleansClient(client => Assert.Same(client, client.UsePostgreSqlClustering(Valid)));
    }
}

using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Options;

namespace StreamForecast.Hosting;

/// <summary>Registers a StreamForecast engine with a .NET host.</summary>
public static class StreamForecastServiceCollectionExtensions
{
    /// <summary>The configuration section the samples bind: <c>StreamForecast</c>.</summary>
    public const string DefaultSectionName = "StreamForecast";

    /// <summary>
    /// Registers an engine for keys of type <typeparamref name="TKey"/>, run by the host: settings bound from
    /// <paramref name="configuration"/> then completed by <paramref name="configure"/>, validated when the host starts
    /// (invalid settings stop the start with an <see cref="OptionsValidationException"/> naming each problem), the
    /// engine restored from the configured checkpoint store and run as a hosted service, and a
    /// <see cref="HostedForecastEngine{TKey}"/> singleton to reach it.
    /// </summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="services">The service collection.</param>
    /// <param name="configuration">
    /// The settings section (for example <c>builder.Configuration.GetSection("StreamForecast")</c>), or null for code only.
    /// Unknown keys in it are errors, so a misspelt setting is reported rather than ignored.
    /// </param>
    /// <param name="configure">Sets what configuration cannot express: at least <see cref="StreamForecastOptions{TKey}.DefaultSeries"/>.</param>
    /// <returns>The service collection.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="services"/> or <paramref name="configure"/> is null.</exception>
    /// <remarks>
    /// Uses the <see cref="TimeProvider"/> registered in the container, or <see cref="TimeProvider.System"/> (registered
    /// if none is). Register the engine before the services that post to it, so that they stop before it drains.
    /// One engine per key type.
    /// </remarks>
    public static IServiceCollection AddStreamForecast<TKey>(
        this IServiceCollection services,
        IConfiguration? configuration,
        Action<StreamForecastOptions<TKey>> configure)
        where TKey : notnull
    {
        ArgumentNullException.ThrowIfNull(services);
        ArgumentNullException.ThrowIfNull(configure);
        OptionsBuilder<StreamForecastOptions<TKey>> options = services.AddOptions<StreamForecastOptions<TKey>>();
        if (configuration is not null)
        {
            options.Bind(configuration, static binder => binder.ErrorOnUnknownConfiguration = true);
        }

        options.Configure(configure).ValidateOnStart();
        services.TryAddEnumerable(ServiceDescriptor.Singleton<IValidateOptions<StreamForecastOptions<TKey>>, StreamForecastOptionsValidator<TKey>>());
        services.TryAddSingleton(TimeProvider.System);
        services.TryAddSingleton<HostedForecastEngine<TKey>>();
        services.AddHostedService<ForecastEngineService<TKey>>();
        return services;
    }
}

using StreamForecast.Samples.SensorThroughput;

// Sensor throughput over MQTT. Without arguments: a self-contained demo (bounded, a few seconds; CI runs it): an
// in-process broker on a free loopback port, four invented gateways publishing their message counts (one goes offline
// for a while, one drifts upward), and a subscriber that feeds the engine, which buckets the counts into 1-minute
// intervals by their (simulated) event time, treats the offline gap as missing rather than zero, forecasts each
// gateway's throughput and reports drift.
// With --broker host:port --topic FILTER --client-id ID --data FOLDER: a consumer of an external broker that runs until
// stopped and acknowledges each message only once the input log holds it (see BrokerMode).
if (BrokerMode.IsRequested(args))
{
    return await BrokerMode.RunAsync(args, Console.Out);
}

await FleetRun.RunAsync(Console.Out);
return 0;

using StreamForecast.Samples.SensorThroughput;

// Sensor throughput over MQTT: an in-process broker on a free loopback port, four invented gateways publishing their
// message counts (one goes offline for a while, one drifts upward), and a subscriber that feeds the engine, which
// buckets the counts into 1-minute intervals by their (simulated) event time, treats the offline gap as missing
// rather than zero, forecasts each gateway's throughput and reports drift. Bounded (a few seconds); CI runs it.
await FleetRun.RunAsync(Console.Out);
return 0;

namespace Driftline.Kafka.Benchmarks;

/// <summary>One latency window: event-to-output percentiles (ms) and the whole process's garbage collections in it.</summary>
internal sealed record LatencyRun(string Name, double P50, double P99, double Max, int[] Collections, double PausedMs, double LongestPauseMs, long Allocated);

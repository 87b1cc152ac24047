using BenchmarkDotNet.Running;
using Driftline.Benchmarks;

// replay: whole-process replay against the bare loop, same file, same run.
// micro:  BenchmarkDotNet over the hot path (parse, score/learn) with allocations.
return args.FirstOrDefault() switch
{
    "replay" => ReplayBenchmark.Run(args.Skip(1).ToArray()),
    "micro" => RunMicro(args.Skip(1).ToArray()),
    "split" => StageSplit.Run(args[1]),
    "engine" => StageSplit.EngineOnly(args[1]),
    "bare" => PrintCount(BareLoop.Run(args[1])),
    "hash-sweep" => HashSweep.Run(args.Skip(1).ToArray()),
    "classes" => ClassesBenchmark.Run(args.Skip(1).ToArray()),
    "pending" => PendingMemory.Run(args.Skip(1).ToArray()),
    "startup" => StartupBenchmark.Run(args.Skip(1).ToArray()),
    // The start-up benchmark's baseline: a .NET process that does nothing.
    "noop" => 0,
    "peak" => PeakMemory.Run(args.Skip(1).ToArray()),
    _ => Usage(),
};

static int RunMicro(string[] rest)
{
    // Without a filter BenchmarkDotNet asks which benchmark to run; run them all instead.
    BenchmarkSwitcher.FromAssembly(typeof(HotPathBenchmarks).Assembly).Run(rest.Contains("--filter") ? rest : [.. rest, "--filter", "*"]);
    return 0;
}

static int PrintCount(long events)
{
    Console.WriteLine(events);
    return 0;
}

static int Usage()
{
    Console.Error.WriteLine("usage: Driftline.Benchmarks replay [--workload demo|wide] [--events N] [--repeats K] | micro [BenchmarkDotNet options] | hash-sweep [WIDE_EVENTS] | classes [--events N] [--repeats K] | pending [EVENTS] | startup [--app DIR]... [--repeats K] [--phases] | peak [EVENTS...] [--repeats K] [--driftline EXE]");
    return 2;
}

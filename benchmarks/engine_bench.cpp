// Engine benchmarks: one second of a 50 Hz bridge supply per method, and the scaling of a
// series-diode ladder. Run through benchmarks/run_benchmarks.py for the full report.
#include <benchmark/benchmark.h>

#include "counters.hpp"
#include "disc/disc.hpp"

namespace {

void BridgeOneSecond(benchmark::State& st) {
  const auto method = static_cast<disc::Method>(st.range(0));
  st.SetLabel(disc::methodName(method));
  disc::RunStats stats;
  for (auto _ : st) {
    disc::Circuit c = disc::reference::bridgeSupply();
    disc::TransientOptions o;
    o.stop = 1.0;
    o.method = method;
    o.start = disc::Start::Cold;
    o.record = {"v:out"};
    const disc::Result r = disc::transient(c, o);
    benchmark::DoNotOptimize(r["v:out"].back());
    stats = r.stats();
  }
  disc::bench::setCounters(st, stats);
}
BENCHMARK(BridgeOneSecond)
    ->Arg(static_cast<int>(disc::Method::Trapezoidal))
    ->Arg(static_cast<int>(disc::Method::Bdf2))
    ->Arg(static_cast<int>(disc::Method::Ida))
    ->Unit(benchmark::kMillisecond);

void Ladder(benchmark::State& st) {
  const int n = static_cast<int>(st.range(0));
  disc::RunStats stats;
  for (auto _ : st) {
    disc::Circuit c = disc::reference::diodeLadder(n);
    disc::TransientOptions o;
    o.stop = 0.02;
    o.method = disc::Method::Bdf2;
    o.start = disc::Start::Cold;
    o.record = {"v:n1"};
    const disc::Result r = disc::transient(c, o);
    benchmark::DoNotOptimize(r["v:n1"].back());
    stats = r.stats();
  }
  disc::bench::setCounters(st, stats);
}
BENCHMARK(Ladder)->Arg(10)->Arg(100)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond);

}  // namespace

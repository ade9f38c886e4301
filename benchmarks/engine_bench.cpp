// Engine benchmarks: one second of a 50 Hz bridge supply per method, and the scaling of a
// series-diode ladder. Run through benchmarks/run_benchmarks.py for the full report.
#include <benchmark/benchmark.h>

#include "counters.hpp"
#include "disc/disc.hpp"

namespace {

void BridgeOneSecond(benchmark::State& st) {
  const auto method = static_cast<disc::Method>(st.range(0));
  st.SetLabel(disc::methodName(method));
  disc::bench::timeColdRun(
      st, [] { return disc::reference::bridgeSupply(); }, 1.0, method, "v:out");
}
BENCHMARK(BridgeOneSecond)
    ->Arg(static_cast<int>(disc::Method::Trapezoidal))
    ->Arg(static_cast<int>(disc::Method::Bdf2))
    ->Arg(static_cast<int>(disc::Method::Ida))
    ->Unit(benchmark::kMillisecond);

void Ladder(benchmark::State& st) {
  const int n = static_cast<int>(st.range(0));
  disc::bench::timeColdRun(
      st, [n] { return disc::reference::diodeLadder(n); }, 0.02, disc::Method::Bdf2, "v:n1");
}
// The same number of runs at every size, so that the fastest (and the median) run of each size
// are equally lucky draws on this shared machine.
BENCHMARK(Ladder)->Arg(10)->Arg(100)->Arg(1000)->Arg(10000)->Iterations(15)->Unit(
    benchmark::kMillisecond);

}  // namespace

// Engine benchmarks: one second of a 50 Hz bridge supply per method, and the scaling of a
// series-diode ladder. Run through benchmarks/run_benchmarks.py for the full report.
#include <benchmark/benchmark.h>

#include "disc/disc.hpp"

namespace {

// Counters of one run; the run's own wall time (RunStats) gives the per-step figures.
void setCounters(benchmark::State& st, const disc::RunStats& s) {
  st.counters["accepted"] = static_cast<double>(s.acceptedSteps);
  st.counters["rejected"] = static_cast<double>(s.rejectedSteps);
  st.counters["newton"] = static_cast<double>(s.newtonIterations);
  st.counters["unknowns"] = s.unknowns;
  st.counters["steps_per_s"] = static_cast<double>(s.acceptedSteps) / s.wallSeconds;
  st.counters["us_per_step"] = 1e6 * s.wallSeconds / static_cast<double>(s.acceptedSteps);
  st.counters["us_per_newton"] = 1e6 * s.wallSeconds / static_cast<double>(s.newtonIterations);
}

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
  setCounters(st, stats);
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
  setCounters(st, stats);
}
BENCHMARK(Ladder)->Arg(10)->Arg(100)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond);

}  // namespace

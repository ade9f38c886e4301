// Benchmark counters and the timed-run loop shared by the benchmark programs.
#pragma once

#include <benchmark/benchmark.h>

#include <algorithm>
#include <string>
#include <vector>

#include "disc/analysis.hpp"
#include "disc/circuit.hpp"
#include "disc/result.hpp"

namespace disc::bench {

// Counters of one run; the run's own wall time (RunStats) gives the per-step figures.
inline void setCounters(benchmark::State& st, const disc::RunStats& s) {
  st.counters["accepted"] = static_cast<double>(s.acceptedSteps);
  st.counters["rejected"] = static_cast<double>(s.rejectedSteps);
  st.counters["newton"] = static_cast<double>(s.newtonIterations);
  st.counters["factorizations"] = static_cast<double>(s.factorizations);
  st.counters["unknowns"] = s.unknowns;
  st.counters["steps_per_s"] = static_cast<double>(s.acceptedSteps) / s.wallSeconds;
  st.counters["us_per_step"] = 1e6 * s.wallSeconds / static_cast<double>(s.acceptedSteps);
  st.counters["us_per_newton"] = 1e6 * s.wallSeconds / static_cast<double>(s.newtonIterations);
}

/// Times a switch-on (cold start) transient of the circuit `make()` builds, `stop` seconds with
/// `method`, recording one signal; the counters come from the fastest run (this machine is
/// shared: other tenants only ever add time, mostly through the shared last-level cache).
template <class Make>
void timeColdRun(benchmark::State& st, Make make, double stop, disc::Method method,
                 const std::string& signal) {
  disc::RunStats stats;
  std::vector<double> walls;
  for (auto _ : st) {
    disc::Circuit c = make();
    disc::TransientOptions o;
    o.stop = stop;
    o.method = method;
    o.start = disc::Start::Cold;
    o.record = {signal};
    const disc::Result r = disc::transient(c, o);
    benchmark::DoNotOptimize(r[signal].back());
    if (stats.wallSeconds <= 0.0 || r.stats().wallSeconds < stats.wallSeconds) stats = r.stats();
    walls.push_back(r.stats().wallSeconds);
  }
  setCounters(st, stats);
  // The median run as well: with equal run counts per size it is the fairer scaling figure
  // (the fastest of many short runs is luckier than the fastest of a few long ones).
  std::sort(walls.begin(), walls.end());
  if (!walls.empty())
    st.counters["us_per_step_median"] =
        1e6 * walls[walls.size() / 2] / static_cast<double>(stats.acceptedSteps);
}

}  // namespace disc::bench

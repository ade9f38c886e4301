// Benchmark counters shared by the benchmark programs.
#pragma once

#include <benchmark/benchmark.h>

#include "disc/result.hpp"

namespace disc::bench {

// Counters of one run; the run's own wall time (RunStats) gives the per-step figures.
inline void setCounters(benchmark::State& st, const disc::RunStats& s) {
  st.counters["accepted"] = static_cast<double>(s.acceptedSteps);
  st.counters["rejected"] = static_cast<double>(s.rejectedSteps);
  st.counters["newton"] = static_cast<double>(s.newtonIterations);
  st.counters["unknowns"] = s.unknowns;
  st.counters["steps_per_s"] = static_cast<double>(s.acceptedSteps) / s.wallSeconds;
  st.counters["us_per_step"] = 1e6 * s.wallSeconds / static_cast<double>(s.acceptedSteps);
  st.counters["us_per_newton"] = 1e6 * s.wallSeconds / static_cast<double>(s.newtonIterations);
}

}  // namespace disc::bench

// Plate-model benchmarks: cost of one plate evaluation (laws, thermal and forming terms,
// Jacobian), and one second of a 50 Hz selenium bridge per-plate against lumped.
#include <benchmark/benchmark.h>

#include <vector>

#include "counters.hpp"
#include "disc/disc.hpp"
#include "engine/linear_solver.hpp"
#include "engine/system.hpp"
#include "plate/plate_model.hpp"

namespace {

void PlateLaws(benchmark::State& st) {
  const auto k = disc::detail::makePlateConstants(
      disc::PlateLibrary::builtIn().at("se-25mm-square"), 1.0, 1.0, 1.0, 1.0);
  disc::detail::PlateState s;
  double uj = -5.0;
  for (auto _ : st) {
    disc::detail::evaluatePlate(k, 300.0, uj + 0.1, uj, 0.01, 12.0, 0.9, s);
    benchmark::DoNotOptimize(s);
    uj = uj > 0.6 ? -5.0 : uj + 0.01;  // sweep reverse to forward
  }
  st.SetItemsProcessed(st.iterations());
}
BENCHMARK(PlateLaws);

// The same with the plate's Arrhenius cache, as the stack evaluates: between Newton iterations
// and steps the plate temperature moves by microkelvins, so the four temperature laws follow by
// a short series instead of four exponentials.
void PlateLawsCached(benchmark::State& st) {
  const auto k = disc::detail::makePlateConstants(
      disc::PlateLibrary::builtIn().at("se-25mm-square"), 1.0, 1.0, 1.0, 1.0);
  disc::detail::PlateState s;
  disc::detail::ArrheniusCache cache;
  double uj = -5.0, theta = 12.0;
  for (auto _ : st) {
    disc::detail::evaluatePlate(k, 300.0, uj + 0.1, uj, 0.01, theta, 0.9, s, &cache);
    benchmark::DoNotOptimize(s);
    uj = uj > 0.6 ? -5.0 : uj + 0.01;  // sweep reverse to forward
    theta += 2e-7;                     // a slow warm-up: the cache refreshes every 500 calls
  }
  st.SetItemsProcessed(st.iterations());
}
BENCHMARK(PlateLawsCached);

// Whole-device evaluation of a 100-plate stack through the engine's assembly, per plate.
void StackEvaluatePerPlate(benchmark::State& st) {
  disc::Circuit c;
  disc::StackOptions o;
  o.plates = 100;
  o.spread = {0.2, 0.2, 0.2};
  c.emplace<disc::Stack>("S1", c.node("a"), disc::kGround,
                         disc::PlateLibrary::builtIn().at("se-25mm-square"), o);
  disc::detail::System sys(c);
  std::vector<double> x(static_cast<std::size_t>(sys.size()) + 1, 0.0), xdot(x.size(), 0.0);
  for (int k = 0; k < sys.size(); ++k)
    x[static_cast<std::size_t>(k)] = sys.kind(k) == disc::UnknownKind::State ? 0.9 : 0.3;
  x[static_cast<std::size_t>(sys.unknownOfNode(c.findNode("a")))] = 80.0;
  disc::EvalContext ctx;
  ctx.x = x.data();
  ctx.xdot = xdot.data();
  for (auto _ : st) {
    sys.evaluate(ctx, true);
    benchmark::DoNotOptimize(sys.i.data());
  }
  st.SetItemsProcessed(st.iterations() * 100);
}
BENCHMARK(StackEvaluatePerPlate);

// Arguments: mode (0 per-plate, 1 lumped) and plates per arm. Taller stacks get a secondary
// voltage and a load resistance in proportion, so every plate carries the same voltage and
// current as in the 5-plate bridge.
void SeleniumBridgeOneSecond(benchmark::State& st) {
  const bool lumped = st.range(0) == 1;
  const int plates = static_cast<int>(st.range(1));
  st.SetLabel(lumped ? "lumped" : "per-plate");
  const auto make = [lumped, plates] {
    disc::reference::SeleniumBridge spec;
    spec.stack.mode = lumped ? disc::StackMode::Lumped : disc::StackMode::PerPlate;
    const double scale = plates / static_cast<double>(spec.stack.plates);
    spec.secondaryRms *= scale;
    spec.load *= scale;
    spec.stack.plates = plates;
    return disc::reference::seleniumBridge(spec);
  };
  disc::bench::timeColdRun(st, make, 1.0, disc::Method::Bdf2, "v:out");
  st.counters["plates_per_arm"] = plates;
}
BENCHMARK(SeleniumBridgeOneSecond)
    ->Args({0, 5})
    ->Args({1, 5})
    ->Args({0, 7})
    ->Args({1, 7})
    ->Args({0, 10})
    ->Args({1, 10})
    ->Unit(benchmark::kMillisecond);

}  // namespace

// The sparse LU of the selenium bridge's Jacobian (per-plate 103 unknowns, lumped 23): one
// refactorisation in the kept pivot order plus one solve, as a Newton iteration does them.
void SeleniumBridgeLu(benchmark::State& st) {
  disc::reference::SeleniumBridge spec;
  const bool lumped = st.range(0) == 1;
  st.SetLabel(lumped ? "lumped" : "per-plate");
  spec.stack.mode = lumped ? disc::StackMode::Lumped : disc::StackMode::PerPlate;
  disc::Circuit c = disc::reference::seleniumBridge(spec);
  disc::detail::System sys(c);
  std::vector<double> x(static_cast<std::size_t>(sys.size()) + 1, 0.0), xdot(x.size(), 0.0);
  sys.initialState(x);
  disc::EvalContext ctx;
  ctx.x = x.data();
  ctx.xdot = xdot.data();
  sys.evaluate(ctx, true);
  sys.assemble(1e4, 1e-12);
  disc::detail::LinearSolver ls;
  ls.factor(sys);
  std::vector<double> rhs(x.size(), 1.0);
  for (auto _ : st) {
    ls.factor(sys);
    std::fill(rhs.begin(), rhs.end(), 1.0);
    ls.solve(rhs.data(), sys.size());
    benchmark::DoNotOptimize(rhs.data());
  }
  st.counters["unknowns"] = sys.size();
  st.counters["full_factorizations"] = static_cast<double>(ls.fullFactorizations());
}
BENCHMARK(SeleniumBridgeLu)->Arg(0)->Arg(1);

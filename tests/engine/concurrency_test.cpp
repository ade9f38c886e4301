// One circuit, many runs at once: each analysis works on its own copy of the circuit, so runs
// from several threads give the serial run's results bit for bit, and a parameter changed on
// the circuit during a run never reaches it. `make test-tsan` runs these under ThreadSanitizer.
#include <catch2/catch.hpp>
#include <condition_variable>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "disc/disc.hpp"

using namespace disc;

namespace {

// The bundled signalling supply (four stacks of two paralleled columns), over a few mains
// cycles: plates, transformer, mains source and linear parts all take part.
Netlist signalling() {
  return loadNetlist(std::string(DISC_NETLIST_DIR) + "/signalling-parallel-stacks.disc");
}

TransientOptions shortRun(Method m) {
  TransientOptions o;
  o.stop = 0.06;  // s, three mains cycles
  o.method = m;
  o.start = Start::Cold;
  o.record = {"v:plus", "i:SR1", "i:MAINS", "v:sa"};
  return o;
}

// Bit-identical: every recorded value equal, not merely close.
void requireIdentical(const Result& a, const Result& b) {
  REQUIRE(a.time() == b.time());
  REQUIRE(a.signals() == b.signals());
  for (const std::string& s : a.signals()) REQUIRE(a[s] == b[s]);
}

}  // namespace

TEST_CASE("One circuit run from several threads gives the serial results bit for bit",
          "[concurrency][engine]") {
  const Netlist nl = signalling();
  const Circuit& circuit = nl.circuit;
  for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::Ida}) {
    const TransientOptions o = shortRun(m);
    const Result serial = transient(circuit, o);
    REQUIRE(serial.time().size() > 10);
    constexpr int kThreads = 4, kRuns = 2;
    std::vector<std::vector<Result>> results(kThreads);
    std::vector<std::thread> threads;
    for (int t = 0; t < kThreads; ++t)
      threads.emplace_back([&, t] {
        for (int r = 0; r < kRuns; ++r)
          results[static_cast<std::size_t>(t)].push_back(transient(circuit, o));
      });
    for (auto& t : threads) t.join();
    for (const auto& perThread : results)
      for (const Result& r : perThread) requireIdentical(serial, r);
  }
}

TEST_CASE("Operating points from several threads agree with the serial one",
          "[concurrency][engine]") {
  Circuit c = reference::halfWaveRc({});
  OperatingPointOptions o;
  const Result serial = operatingPoint(c, o);
  std::vector<Result> results(3);
  std::vector<std::thread> threads;
  for (std::size_t t = 0; t < results.size(); ++t)
    threads.emplace_back([&, t] { results[t] = operatingPoint(c, o); });
  for (auto& t : threads) t.join();
  for (const Result& r : results) requireIdentical(serial, r);
}

TEST_CASE("A parameter changed during a run does not reach the run", "[concurrency][engine]") {
  Netlist nl = signalling();
  TransientOptions o = shortRun(Method::Trapezoidal);
  const Result before = transient(nl.circuit, o);

  // The run's first progress call stops it until the main thread has changed the circuit: the
  // change happens while the run is under way, in a known order (no data race for TSan).
  std::mutex mu;
  std::condition_variable cv;
  bool running = false, changed = false;
  o.progress = [&](double, double) {
    std::unique_lock lock(mu);
    if (!running) {
      running = true;
      cv.notify_all();
      cv.wait(lock, [&] { return changed; });
    }
    return true;
  };
  Result during;
  std::thread run([&] { during = transient(nl.circuit, o); });
  {
    std::unique_lock lock(mu);
    cv.wait(lock, [&] { return running; });
    nl.circuit.at("SR1").setParameter("plates", 3);
    nl.circuit.at("RRELAYS").setParameter("resistance", 30.0);
    changed = true;
    cv.notify_all();
  }
  run.join();
  requireIdentical(before, during);

  // The change does reach the next run.
  o.progress = {};
  const Result after = transient(nl.circuit, o);
  CHECK(after["v:plus"].back() != before["v:plus"].back());
}

TEST_CASE("A run leaves the circuit it ran as it was", "[concurrency][engine]") {
  // The engine binds and evaluates its own copy: running twice gives the same, and the
  // circuit's devices are not touched (a copy made after a run runs like the original).
  const Netlist nl = signalling();
  const TransientOptions o = shortRun(Method::Bdf2);
  const Result first = transient(nl.circuit, o);
  const Circuit copy = nl.circuit;
  requireIdentical(first, transient(nl.circuit, o));
  requireIdentical(first, transient(copy, o));
}

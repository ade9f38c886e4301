// The slow-state envelope's failure checks: destruction located between slow steps, runaway
// named, and nothing past destruction ever recorded.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <string>

#include "disc/disc.hpp"

using namespace disc;

namespace {

// An invented test case: a selenium plate stored until fully deformed, put across a stiff
// 50 Hz source. Its leakage and forward current heat it faster than it can cool.
const char* const kDeformedOnStiffMains = R"(
voltage V1 a gnd sine rms=14V frequency=50Hz resistance=0.01ohm
stack SR1 a gnd type=se-25mm-square plates=1 forming=0
)";

}  // namespace

TEST_CASE("Warm-up: a plate past destruction ends the run at the located crossing",
          "[envelope][failure]") {
  Netlist nl = parseNetlist(kDeformedOnStiffMains, "deformed.disc");
  EnvelopeOptions eo;
  eo.duration = 3600.0;
  eo.record = {"temp:SR1", "p:SR1"};
  const EnvelopeResult er = warmUp(nl.circuit, eo);
  REQUIRE(er.failed());
  const auto destroyed = std::find_if(er.failures.begin(), er.failures.end(), [](const auto& e) {
    return e.kind == ThermalCondition::Destroyed;
  });
  REQUIRE(destroyed != er.failures.end());
  INFO(destroyed->verdict());
  CHECK(destroyed->body == "SR1#1");
  CHECK(destroyed->time > 0.0);
  CHECK(destroyed->time < eo.duration);
  CHECK(er.endTime == Approx(destroyed->time));
  CHECK(er.stoppedBy == destroyed->verdict());
  // The series ends at the type's destruction temperature (the melting of its counter-electrode
  // alloy, with its source in docs/plate-model.md), never above.
  const auto& temp = er.series["temp:SR1"];
  CHECK(temp.back() == Approx(destroyed->destruction).margin(0.05));
  CHECK(*std::max_element(temp.begin(), temp.end()) <= destroyed->destruction + 0.05);
  for (const auto& e : er.failures) CHECK(e.temperature <= destroyed->destruction + 1e-9);
}

TEST_CASE("Warm-up: a formed stack within its ratings reports no failure", "[envelope][failure]") {
  Netlist nl = loadNetlist(std::string(DISC_NETLIST_DIR) + "/table-radio-half-wave.disc");
  EnvelopeOptions eo;
  eo.duration = 600.0;
  const EnvelopeResult er = warmUp(nl.circuit, eo);
  CHECK(er.failures.empty());
  CHECK_FALSE(er.failed());
  CHECK(er.stoppedBy.empty());
  CHECK(er.endTime == Approx(eo.duration));
  // The settled period at the end carries the multiplier of the monodromy it was settled on,
  // also when its last shooting pass was a chord step on an earlier one: a stable orbit.
  CHECK(er.last.stats.largestMultiplier > 0.0);
  CHECK(er.last.stats.largestMultiplier < 1.0);
}

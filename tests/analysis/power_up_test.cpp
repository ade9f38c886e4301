// The power-up planner on a stored stack: the schedule it proposes, run again through the
// language and the warm-up envelope, stays inside every limit, and the stack re-forms on it.
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <iterator>
#include <string>

#include "disc/constants.hpp"
#include "disc/devices/stack.hpp"
#include "disc/netlist.hpp"
#include "disc/power_up.hpp"
#include "disc/session.hpp"

namespace {

const std::string kDir = std::string(DISC_NETLIST_DIR) + "/../tests/analysis/";

std::string readText(const std::string& path) {
  std::ifstream in(path);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

/// The value of a series column at the last row at or before time t.
double at(const disc::Result& r, const std::string& signal, double t) {
  const auto& time = r.time();
  std::size_t k = 0;
  while (k + 1 < time.size() && time[k + 1] <= t) ++k;
  return r[signal][k];
}

}  // namespace

TEST_CASE("power-up: a stored stack brought up on the planner's schedule stays inside its limits",
          "[power-up]") {
  const std::string file = kDir + "stored-table-radio.disc";
  const disc::Netlist nl = disc::loadNetlist(file);
  disc::PowerUpOptions o;
  o.stack = "SR1";
  const disc::PowerUpPlan plan = disc::planPowerUp(nl, o);
  REQUIRE(plan.verdict == "re-form");
  REQUIRE(plan.verified);
  // Straight on at full voltage is not among the safe steps: the plan starts lower.
  REQUIRE(plan.steps.size() >= 2);
  CHECK(plan.steps.front().fraction < 1.0);
  CHECK(plan.steps.back().fraction == 1.0);
  CHECK(plan.full == Approx(120.0));

  // The schedule in netlist words, put on the mains in the file's own text and run as a
  // warm-up through the language: the same path a user takes, not the planner's.
  std::string text = readText(file);
  const std::string mains = "rms=120V";
  REQUIRE(text.find(mains) != std::string::npos);
  text.replace(text.find(mains), mains.size(), mains + " schedule=\"" + plan.schedule + "\"");
  text += "run warm-up duration=" + std::to_string(plan.totalTime) + "s max-step=60s\n";
  disc::Netlist scheduled = disc::emptyNetlist(file);
  disc::appendNetlist(scheduled, text, file);
  const disc::RunOutcome out = disc::runNetlist(scheduled);
  REQUIRE(out.analyses.size() == 1);
  const disc::WarmUpSummary& w = out.analyses[0].warmUp;
  CHECK(w.failures.empty());
  CHECK(w.stoppedBy.empty());
  for (const auto& c : w.firstLimits) CHECK_FALSE(c.what.find("temperature") != std::string::npos);
  const disc::Result& s = out.analyses[0].result;
  const auto* st = dynamic_cast<const disc::Stack*>(nl.circuit.find("SR1"));
  REQUIRE(st != nullptr);
  const disc::PlateType& pt = st->type();
  const double ta = nl.circuit.ambient(), tmax = pt.ratings.maxPlateTemperature;
  const double reverseLimit = (tmax - ta) / pt.thermal.rth;
  for (std::size_t k = 0; k < s.time().size(); ++k) {
    // The planner's margin (90 % of each limit) holds on the independent run, to the slow
    // steps' resolution (one step of 1 K and of 2 % on the dissipation).
    CHECK(s["max(temp:SR1)"][k] - ta <= 0.9 * (tmax - ta) + 1.0);
    CHECK(s["prev:SR1"][k] / st->plateCount() <= 0.9 * reverseLimit * 1.02);
  }

  // Re-forming during the first step: the forming deficit 1 - F shrinks and the leakage falls
  // with it.
  const double t1 = plan.steps[0].duration;
  const double f0 = at(s, "form:SR1", 0.0), f1 = at(s, "form:SR1", t1);
  CHECK(f0 == Approx(std::exp(-30.0 / pt.history.storageTauYears)).epsilon(1e-6));
  CHECK(1.0 - f1 < 0.5 * (1.0 - f0));
  CHECK(at(s, "irev:SR1", t1) < at(s, "irev:SR1", 0.0));
  // No faster than the forming law allows: with the reverse voltage per plate at most its
  // period maximum V and the plate at most its hottest T, the deficit decays at most at the
  // rate V / (V_ref tau) exp((E_f/k)(1/T0 - 1/T)) (docs/plate-model.md, "Forming", the law
  // written out here on its own).
  double vmax = 0.0, tmaxSeen = 0.0;
  for (std::size_t k = 0; k < s.time().size() && s.time()[k] <= t1; ++k) {
    vmax = std::max(vmax, s["max(vrev:SR1)"][k]);
    tmaxSeen = std::max(tmaxSeen, s["max(temp:SR1)"][k]);
  }
  const double rate = vmax / (pt.history.reformVoltage * pt.history.reformTau) *
                      std::exp(pt.history.reformActivationEv / disc::constants::kBoltzmannEv *
                               (1.0 / pt.physics.t0 - 1.0 / tmaxSeen));
  CHECK(1.0 - f1 >= (1.0 - f0) * std::exp(-rate * t1) * (1.0 - 1e-3));
  // And the leakage a meter reads falls by more than the step's own rise in temperature could
  // hide: the end of the first step leaks less than half of its start.
  CHECK(plan.steps[0].leakageEnd < 0.5 * plan.steps[0].leakageStart);
}

TEST_CASE("power-up: a stack that cannot be brought up is to be replaced", "[power-up]") {
  const disc::Netlist nl = disc::loadNetlist(kDir + "boxed-table-radio.disc");
  disc::PowerUpOptions o;
  o.stack = "SR1";
  const disc::PowerUpPlan plan = disc::planPowerUp(nl, o);
  CHECK(plan.verdict == "replace");
  REQUIRE_FALSE(plan.reasons.empty());
  CHECK(plan.reasons.front().find("(common practice)") != std::string::npos);
  // The steps it found kept inside the limits all the same.
  for (const auto& st : plan.steps) CHECK(st.fraction < 1.0);
  const std::string json = disc::powerUpJson(plan);
  CHECK(json.find("\"verdict\": \"replace\"") != std::string::npos);
  const std::string text = disc::powerUpText(plan);
  CHECK(text.find("selenium") != std::string::npos);
  CHECK(text.find("qualified technician") != std::string::npos);
}

TEST_CASE("power-up: input errors name what is wrong", "[power-up]") {
  const disc::Netlist nl = disc::loadNetlist(kDir + "stored-table-radio.disc");
  disc::PowerUpOptions o;
  o.stack = "C1";
  CHECK_THROWS_AS(disc::planPowerUp(nl, o), disc::InputError);
  o.stack = "SR1";
  o.source = "RHT";
  CHECK_THROWS_AS(disc::planPowerUp(nl, o), disc::InputError);
  o.source.clear();
  o.margin = 1.5;
  CHECK_THROWS_AS(disc::planPowerUp(nl, o), disc::InputError);
}

// Thermal networks: heat nodes, heat paths and heat sources against closed forms, their heat
// balance in warm-ups, stacks on a shared heat node, and the parser's errors.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "disc/disc.hpp"

using namespace disc;
using Catch::Matchers::Contains;

namespace {

const PlateType& builtin(const char* name) {
  return PlateLibrary::builtIn().at(name);
}

/// Two lumps in a ladder: heat P into node A (capacity c1), A joined to B (capacity c2) by r12,
/// B to the ambient by r2. With both at the ambient at t = 0 the rises are
///   theta(t) = theta_ss + k1 v1 exp(l1 t) + k2 v2 exp(l2 t),
/// the lumped capacitance method (Incropera and DeWitt, Fundamentals of Heat and Mass Transfer,
/// section 5.1) applied to two lumps joined in a thermal circuit (section 3.1): a linear
/// two-state system whose solution is a sum of two exponentials, l1 and l2 the eigenvalues of
/// its matrix, theta_ss = (P (r12 + r2), P r2).
struct Ladder {
  double p = 5.0, c1 = 40.0, c2 = 300.0, r12 = 2.0, r2 = 3.0;
  /// Rises of A and B at time t.
  std::pair<double, double> at(double t) const {
    const double g = 1.0 / r12, g2 = 1.0 / r2;
    // d/dt (a, b) = M (a, b) + (P / c1, 0), M = [[-g/c1, g/c1], [g/c2, -(g + g2)/c2]].
    const double m11 = -g / c1, m12 = g / c1, m21 = g / c2, m22 = -(g + g2) / c2;
    const double tr = m11 + m22, det = m11 * m22 - m12 * m21;
    const double disc = std::sqrt(tr * tr / 4.0 - det);
    const double l1 = tr / 2.0 + disc, l2 = tr / 2.0 - disc;
    // Eigenvectors (m12, l - m11); coefficients from theta(0) = 0.
    const double ssA = p * (r12 + r2), ssB = p * r2;
    const double v1a = m12, v1b = l1 - m11, v2a = m12, v2b = l2 - m11;
    // k1 v1 + k2 v2 = -ss
    const double d = v1a * v2b - v2a * v1b;
    const double k1 = (-ssA * v2b + ssB * v2a) / d, k2 = (-ssB * v1a + ssA * v1b) / d;
    return {ssA + k1 * v1a * std::exp(l1 * t) + k2 * v2a * std::exp(l2 * t),
            ssB + k1 * v1b * std::exp(l1 * t) + k2 * v2b * std::exp(l2 * t)};
  }
  /// Adds the network to c, with a mains-fed resistor beside it so the circuit has a period.
  void addTo(Circuit& c) const {
    c.emplace<HeatNode>("A", HeatNodeParams{c1, 0.0});
    c.emplace<HeatNode>("B", HeatNodeParams{c2, r2});
    c.emplace<HeatPath>("RAB", "A", "B", r12);
    c.emplace<HeatSource>("PT", "A", p);
    c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::sineRms(10.0, 50.0));
    c.emplace<Resistor>("R1", c.node("a"), kGround, 100.0);
  }
};

/// Integral over the series' rows by the trapezoid rule corrected to Simpson's on pairs of
/// intervals (uneven spacing), the last odd interval by the trapezoid rule.
double integral(const std::vector<double>& t, const std::vector<double>& f) {
  double s = 0.0;
  std::size_t j = 0;
  for (; j + 2 < t.size(); j += 2) {
    const double h0 = t[j + 1] - t[j], h1 = t[j + 2] - t[j + 1], h = h0 + h1;
    s += h / 6.0 *
         ((2.0 - h1 / h0) * f[j] + h * h / (h0 * h1) * f[j + 1] + (2.0 - h0 / h1) * f[j + 2]);
  }
  if (j + 1 < t.size()) s += 0.5 * (t[j + 1] - t[j]) * (f[j] + f[j + 1]);
  return s;
}

/// The signals the heat balance of a circuit's thermal network needs.
std::vector<std::string> balanceSignals(const Circuit& c) {
  std::vector<std::string> s;
  for (const auto& d : c.devices()) {
    if (const auto* st = dynamic_cast<const Stack*>(d.get())) {
      s.push_back("p:" + st->name());
      for (int k = 1; k <= st->plateCount(); ++k)
        s.push_back("temp:" + st->name() + "#" + std::to_string(k));
    } else if (dynamic_cast<const HeatNode*>(d.get())) {
      s.push_back("temp:" + d->name());
      s.push_back("loss:" + d->name());
    } else if (const auto* hp = dynamic_cast<const HeatPath*>(d.get())) {
      if (hp->toAmbient()) s.push_back("flow:" + d->name());
    } else if (dynamic_cast<const HeatSource*>(d.get())) {
      s.push_back("p:" + d->name());
    }
  }
  return s;
}

/// Integral over the series' rows by the trapezoid rule: exactly what the trapezoidal method
/// does to each row of its system over each step, so a transient's heat balance integrated this
/// way is off only by each step's Newton residual.
double trapezoid(const std::vector<double>& t, const std::vector<double>& f) {
  double s = 0.0;
  for (std::size_t j = 0; j + 1 < t.size(); ++j) s += 0.5 * (t[j + 1] - t[j]) * (f[j] + f[j + 1]);
  return s;
}

using Quadrature = double (*)(const std::vector<double>&, const std::vector<double>&);

/// The whole network's heat over a run: what the stacks dissipate and the heat sources give =
/// what every plate and heat node stores + what leaves for the ambient (a node's to-ambient, a
/// heat path to the ambient, a plate with no heat node). Every term is integrated from the
/// recorded series (a warm-up's period means, or a transient's steps) by `quad`; returns
/// in / (stored + lost) - 1, with the terms in `stored` and `lost` (J).
double heatImbalance(const Circuit& c, const Result& series, double& stored, double& lost,
                     Quadrature quad = integral) {
  const auto& t = series.time();
  const double ta = c.ambient();
  double in = 0.0;
  stored = lost = 0.0;
  for (const auto& d : c.devices()) {
    if (const auto* st = dynamic_cast<const Stack*>(d.get())) {
      in += quad(t, series["p:" + st->name()]);
      const double cth = st->type().thermal.cth,
                   gth = st->options().cooling / st->type().thermal.rth;
      for (int k = 1; k <= st->plateCount(); ++k) {
        const auto& tk = series["temp:" + st->name() + "#" + std::to_string(k)];
        stored += cth * (tk.back() - tk.front());
        if (st->heatNode().empty()) {
          std::vector<double> loss(tk.size());
          for (std::size_t j = 0; j < tk.size(); ++j) loss[j] = gth * (tk[j] - ta);
          lost += quad(t, loss);
        }
      }
    } else if (const auto* n = dynamic_cast<const HeatNode*>(d.get())) {
      const auto& tn = series["temp:" + n->name()];
      stored += n->params().capacity * (tn.back() - tn.front());
      lost += quad(t, series["loss:" + n->name()]);
    } else if (const auto* hp = dynamic_cast<const HeatPath*>(d.get())) {
      if (hp->toAmbient()) lost += quad(t, series["flow:" + hp->name()]);
    } else if (dynamic_cast<const HeatSource*>(d.get())) {
      in += quad(t, series["p:" + d->name()]);
    }
  }
  INFO("in " << in << " J, stored " << stored << " J, lost " << lost << " J");
  return in / (stored + lost) - 1.0;
}

double heatImbalance(const Circuit& c, const EnvelopeResult& er, double& stored) {
  double lost = 0.0;
  return heatImbalance(c, er.series, stored, lost);
}

/// A half-wave selenium supply of `stacks` stacks of `arms` columns each (8 plates per column),
/// paralleled between the same nodes, each stack on heat node `node` + its index, or all on
/// "SINK" when shared.
Circuit selenium(int stacks, int arms, bool shared) {
  Circuit c;
  c.setAmbient(303.15);
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::sineRms(120.0, 60.0), 5.0);
  StackOptions so;
  so.plates = 8;
  so.arms = arms;
  for (int k = 1; k <= stacks; ++k) {
    const std::string sink = shared ? "SINK" : "SINK" + std::to_string(k);
    if (!shared || k == 1) c.emplace<HeatNode>(sink, HeatNodeParams{60.0, 2.0});
    auto& s = c.emplace<Stack>("SR" + std::to_string(k), c.node("a"), c.node("c"),
                               builtin("se-25mm-36v"), so);
    s.setHeatNode(sink);
  }
  c.emplace<Capacitor>("C1", c.node("c"), kGround, 100e-6);
  c.emplace<Resistor>("R1", c.node("c"), kGround, 800.0);
  return c;
}

double hottestPlate(const EnvelopeResult& er, const Circuit& c) {
  double hot = 0.0;
  for (const auto& d : c.devices())
    if (const auto* st = dynamic_cast<const Stack*>(d.get()))
      for (int k = 1; k <= st->plateCount(); ++k)
        hot = std::max(hot, er.series["temp:" + st->name() + "#" + std::to_string(k)].back());
  return hot;
}

}  // namespace

TEST_CASE("A two-node heat ladder under constant heat follows its two exponentials", "[thermal]") {
  const Ladder l;
  Circuit c;
  l.addTo(c);
  TransientOptions to;
  to.stop = 1500.0;
  to.maxStep = 5.0;
  to.start = Start::Cold;
  to.record = {"temp:A", "temp:B", "flow:RAB", "loss:B", "p:PT", "stored:A"};
  const Result r = transient(c, to);
  const auto& t = r.time();
  const auto& a = r["temp:A"];
  const auto& b = r["temp:B"];
  double worst = 0.0;
  for (std::size_t k = 0; k < t.size(); ++k) {
    const auto [ea, eb] = l.at(t[k]);
    worst = std::max({worst, std::abs(a[k] - c.ambient() - ea), std::abs(b[k] - c.ambient() - eb)});
  }
  INFO("worst " << worst << " K over " << t.size() << " steps");
  // The transient's own temperature tolerance is 1e-4 K per step (reltol 1e-3 of the rise):
  // a rise of 25 K is followed within a few hundredths of a kelvin.
  CHECK(worst < 0.05);
  CHECK(a.front() == Approx(c.ambient()));
  CHECK(r["p:PT"].back() == Approx(l.p));
  CHECK(r["loss:B"].back() == Approx((b.back() - c.ambient()) / l.r2));
  CHECK(r["flow:RAB"].back() == Approx((a.back() - b.back()) / l.r12));
  CHECK(r["stored:A"].back() == Approx(l.c1 * (a.back() - c.ambient())));

  SECTION("the warm-up envelope integrates the heat nodes as slow states") {
    EnvelopeOptions eo;
    eo.duration = 1500.0;
    eo.record = {"temp:A", "temp:B"};
    const EnvelopeResult er = warmUp(c, eo);
    const auto& te = er.series.time();
    REQUIRE(te.size() >= 5);
    double w = 0.0;
    for (std::size_t k = 0; k < te.size(); ++k) {
      const auto [ea, eb] = l.at(te[k]);
      w = std::max({w, std::abs(er.series["temp:A"][k] - c.ambient() - ea),
                    std::abs(er.series["temp:B"][k] - c.ambient() - eb)});
    }
    INFO("worst " << w << " K over " << te.size() << " slow steps");
    // reltol 1e-3 of a 25 K rise and 0.02 K absolute per slow step.
    CHECK(w < 0.1);
  }
}

TEST_CASE("One heat node under a constant heat source follows its RC step", "[thermal]") {
  // A single lump of capacity C joined to the ambient by R, heated by P from t = 0 at the
  // ambient: T(t) = T_amb + P R (1 - exp(-t / (R C))), the lumped capacitance method
  // (Incropera and DeWitt, Fundamentals of Heat and Mass Transfer, section 5.1, with a heat
  // input), the thermal counterpart of an RC circuit's step response.
  const double cap = 200.0, r = 3.0, p = 10.0, tau = r * cap;
  Circuit c;
  c.setAmbient(293.15);
  c.emplace<HeatNode>("PLATE", HeatNodeParams{cap, r});
  c.emplace<HeatSource>("Q1", "PLATE", p);
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::dc(1.0));
  c.emplace<Resistor>("R1", c.node("a"), kGround, 1.0);
  TransientOptions to;
  to.stop = 5.0 * tau;
  to.maxStep = 10.0;
  to.start = Start::Cold;
  to.record = {"temp:PLATE", "loss:PLATE", "stored:PLATE"};
  const Result res = transient(c, to);
  const auto& t = res.time();
  const auto& temp = res["temp:PLATE"];
  REQUIRE(t.size() > 50);
  double worst = 0.0;
  for (std::size_t k = 0; k < t.size(); ++k)
    worst = std::max(worst, std::abs(temp[k] - (c.ambient() + p * r * -std::expm1(-t[k] / tau))));
  INFO("worst " << worst << " K of a " << p * r << " K rise over " << t.size() << " steps");
  // The transient's reltol, 1e-3 of the 30 K rise, per step.
  CHECK(worst < 0.03);
  CHECK(temp.front() == Approx(c.ambient()));
  // At five time constants the rise is 1 - e^-5 = 99.3 % of P R.
  CHECK(temp.back() - c.ambient() == Approx(p * r * -std::expm1(-5.0)).epsilon(1e-3));
  CHECK(res["loss:PLATE"].back() == Approx((temp.back() - c.ambient()) / r));
  CHECK(res["stored:PLATE"].back() == Approx(cap * (temp.back() - c.ambient())));
}

TEST_CASE("Transient: the plates' dissipation is stored or reaches the ambient",
          "[thermal][transient]") {
  // Two 8-plate stacks on one heat sink, the sink mounted on a chassis that a transformer also
  // heats and that loses heat to the ambient. Over a transient from cold, energy is conserved
  // (first law): the heat the stacks dissipate and the source gives equals the heat stored in
  // every plate and heat node, C (T_end - T_start) each, plus the heat that reached the
  // ambient. Small heat capacities let every term matter within seconds of mains.
  PlateType fast = builtin("se-25mm-36v");
  fast.thermal.cth = 0.05;  // J/K: a 3 s plate time constant instead of 100 s
  Circuit c;
  c.setAmbient(303.15);
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::sineRms(120.0, 60.0), 5.0);
  StackOptions so;
  so.plates = 8;
  for (const char* name : {"SR1", "SR2"})
    c.emplace<Stack>(name, c.node("a"), c.node("c"), fast, so).setHeatNode("SINK");
  c.emplace<Capacitor>("C1", c.node("c"), kGround, 100e-6);
  c.emplace<Resistor>("R1", c.node("c"), kGround, 400.0);
  c.emplace<HeatNode>("SINK", HeatNodeParams{0.3, 0.0});
  c.emplace<HeatNode>("CHASSIS", HeatNodeParams{1.0, 3.0});
  c.emplace<HeatPath>("MOUNT", "SINK", "CHASSIS", 1.5);
  c.emplace<HeatPath>("SKIN", "CHASSIS", "ambient", 2.5);
  c.emplace<HeatSource>("T1", "CHASSIS", 0.5);
  TransientOptions to;
  to.stop = 6.0;
  to.start = Start::Cold;
  to.method = Method::Trapezoidal;
  to.record = balanceSignals(c);
  for (const char* q : {"v:a,c", "i:SR1", "i:SR2"}) to.record.push_back(q);
  const Result res = transient(c, to);
  double stored = 0.0, lost = 0.0;
  const double e = heatImbalance(c, res, stored, lost, trapezoid);
  INFO("stored " << stored << " J, lost " << lost << " J, imbalance " << e);
  CHECK(stored > 5.0);
  CHECK(lost > 0.2 * stored);
  // Integrated by the rule the trapezoidal method applies to each row, the balance is off only
  // by the steps' own errors: the backward-Euler steps the method takes at restarts and to damp
  // stiff ringing, and each step's local error, held to reltol (1e-3 by default).
  CHECK(std::abs(e) < 2e-3);
  {
    // A discretisation error, not a missing term: it falls with the tolerance (about 1e-5 at
    // reltol 1e-5), where a lost or doubled heat flow would stay.
    TransientOptions fine = to;
    fine.tol.reltol = 1e-5;
    double s2 = 0.0, l2 = 0.0;
    const double e2 = heatImbalance(c, transient(c, fine), s2, l2, trapezoid);
    INFO("at reltol 1e-5: stored " << s2 << " J, lost " << l2 << " J, imbalance " << e2);
    CHECK(std::abs(e2) < 5e-5);
    CHECK(std::abs(e2) < 0.2 * std::abs(e));
  }

  // The heat the plates receive is the electrical power at the stacks' terminals, v i (the
  // junctions' and the trap branches' stored charge returns each cycle: a few microjoules).
  const auto& t = res.time();
  std::vector<double> vi(t.size()), heat(t.size());
  for (std::size_t k = 0; k < t.size(); ++k) {
    vi[k] = res["v:a,c"][k] * (res["i:SR1"][k] + res["i:SR2"][k]);
    heat[k] = res["p:SR1"][k] + res["p:SR2"][k];
  }
  const double electrical = trapezoid(t, vi), dissipated = trapezoid(t, heat);
  INFO("electrical " << electrical << " J, into the plates " << dissipated << " J");
  CHECK(dissipated > 1.0);
  CHECK(electrical == Approx(dissipated).epsilon(1e-3));
}

TEST_CASE("Supply report: heat nodes' figures and the plates' steady estimate on them",
          "[thermal][report]") {
  // A stack on a heat sink, the sink on a chassis, the chassis to the ambient, and a
  // transformer's loss into the chassis. At steady state the heat flows through series
  // thermal resistances, so each rise is the heat through each resistance times it, summed
  // (thermal circuits, Incropera and DeWitt, Fundamentals of Heat and Mass Transfer,
  // section 3.1): the chassis rises (P + Q) R_skin, the sink P R_mount more, and the hottest
  // plate its own dissipation times its thermal resistance above the sink.
  const double rMount = 1.5, rSkin = 2.5, q = 8.0;
  const std::string text =
      "ambient 30degC\n"
      "voltage V1 a gnd mains rms=120V frequency=60Hz resistance=5\n"
      "stack SR1 a c type=se-25mm-36v plates=8 heat-node=SINK\n"
      "capacitor C1 c gnd 100uF\nresistor R1 c gnd 800\n"
      "heat-node SINK capacity=60J/K\n"
      "heat-node CHASSIS capacity=400J/K\n"
      "heat-path MOUNT SINK CHASSIS 1.5K/W\n"
      "heat-path SKIN CHASSIS ambient 2.5K/W\n"
      "heat-source T1 CHASSIS power=8W\n"
      "output c gnd load=R1\nrun transient stop=0.5s\n";
  const Netlist nl = parseNetlist(text, "t.disc");
  const RunOutcome out = runNetlist(nl);
  REQUIRE(out.hasReport);
  const SupplyReport& rep = out.report;
  const double ta = 303.15;
  REQUIRE(rep.stacks.size() == 1);
  const StackFigures& st = rep.stacks.front();
  const double p = st.powerForward + st.powerReverse;
  REQUIRE(p > 0.1);
  REQUIRE(rep.heatNodes.size() == 2);
  const HeatNodeFigures& sink = rep.heatNodes[0];
  const HeatNodeFigures& chassis = rep.heatNodes[1];
  CHECK(sink.name == "SINK");
  CHECK(chassis.name == "CHASSIS");
  CHECK(sink.heatIn == Approx(p).epsilon(1e-12));
  CHECK(chassis.heatIn == Approx(q).epsilon(1e-12));
  const double chassisSteady = ta + (p + q) * rSkin, sinkSteady = chassisSteady + p * rMount;
  CHECK(chassis.temperatureSteady == Approx(chassisSteady).epsilon(1e-12));
  CHECK(sink.temperatureSteady == Approx(sinkSteady).epsilon(1e-12));
  const double rth = builtin("se-25mm-36v").thermal.rth;
  CHECK(st.temperatureSteady == Approx(sinkSteady + st.powerPerPlate * rth).epsilon(1e-12));
  // Half a second warms nothing much: the end temperatures are the recorded ones.
  const Result& r = out.analyses.back().result;
  CHECK(sink.temperatureEnd == Approx(r["temp:SINK"].back()));
  CHECK(chassis.temperatureEnd == Approx(r["temp:CHASSIS"].back()));
  CHECK(sink.temperatureEnd > ta);
  CHECK(sink.temperatureEnd < ta + 0.5);

  SECTION("the heat source is heat, not an electrical loss") {
    for (const auto& l : rep.output.losses) CHECK(l.device != "T1");
    double losses = 0.0;
    for (const auto& l : rep.output.losses) losses += l.power;
    // Input = output + losses (Tellegen's theorem), to the run's reltol: 8 W of heat counted
    // as a loss would break it a hundred times over.
    CHECK(rep.output.inputPower - rep.output.outputPower - losses ==
          Approx(0.0).margin(1e-3 * rep.output.inputPower));
    CHECK(q > 100.0 * 1e-3 * rep.output.inputPower);
  }

  SECTION("text, JSON and HTML carry them") {
    const std::string txt = reportText(rep);
    char line[160];
    std::snprintf(line, sizeof line, "%.1f degC at end of run, %.1f degC steady-state estimate",
                  sink.temperatureEnd - 273.15, sinkSteady - 273.15);
    CHECK_THAT(txt, Contains("HEAT NODES"));
    CHECK_THAT(txt, Contains(line));
    CHECK_THAT(txt, Contains("8.000 W in"));
    const auto j = nlohmann::json::parse(reportJson(rep));
    REQUIRE(j["heat_nodes"].size() == 2);
    CHECK(j["heat_nodes"][0]["name"] == "SINK");
    CHECK(j["heat_nodes"][0]["temperature_steady_estimate_K"].get<double>() ==
          Approx(sinkSteady).epsilon(1e-12));
    CHECK(j["heat_nodes"][0]["temperature_end_K"].get<double>() == Approx(sink.temperatureEnd));
    CHECK(j["heat_nodes"][0]["heat_in_W"].get<double>() == Approx(p).epsilon(1e-12));
    CHECK(j["heat_nodes"][1]["name"] == "CHASSIS");
    CHECK(j["heat_nodes"][1]["temperature_steady_estimate_K"].get<double>() ==
          Approx(chassisSteady).epsilon(1e-12));
    CHECK(j["heat_nodes"][1]["heat_in_W"].get<double>() == Approx(q));
    CHECK_FALSE(j["output"]["losses_W"].contains("T1"));
    const std::string html = reportHtml(nl, out);
    CHECK_THAT(html, Contains("<h2>Heat nodes</h2>"));
    CHECK_THAT(html, Contains("<td>CHASSIS</td>"));
  }

  SECTION("a circuit without heat nodes has none in its report") {
    const Netlist plain = parseNetlist(
        "voltage V1 a gnd mains rms=120V frequency=60Hz resistance=5\n"
        "stack SR1 a c type=se-25mm-36v plates=8\ncapacitor C1 c gnd 100uF\n"
        "resistor R1 c gnd 800\noutput c gnd load=R1\nrun transient stop=0.2s\n",
        "plain.disc");
    const RunOutcome po = runNetlist(plain);
    REQUIRE(po.hasReport);
    CHECK(po.report.heatNodes.empty());
    CHECK(reportText(po.report).find("HEAT NODES") == std::string::npos);
    CHECK(nlohmann::json::parse(reportJson(po.report))["heat_nodes"].empty());
  }
}

TEST_CASE("A heat node's steady rise is its heat times its resistance to the ambient",
          "[thermal]") {
  // The operating point solves the thermal network at steady state: two sources into one node
  // with two parallel ways out, 1/(1/4 + 1/12) = 3 K/W (thermal circuits, Incropera and
  // DeWitt, section 3.1).
  Circuit c;
  c.emplace<HeatNode>("CH", HeatNodeParams{500.0, 4.0});
  c.emplace<HeatPath>("RW", "CH", "ambient", 12.0);
  c.emplace<HeatSource>("T1", "CH", 6.0);
  c.emplace<HeatSource>("VL", "CH", 4.0);
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::dc(1.0));
  c.emplace<Resistor>("R1", c.node("a"), kGround, 1.0);
  OperatingPointOptions oo;
  oo.record = {"temp:CH"};
  const Result op = operatingPoint(c, oo);
  CHECK(op["temp:CH"].back() - c.ambient() == Approx(30.0).epsilon(1e-9));
}

TEST_CASE("Warm-up: the heat of every thermal network balances", "[thermal][envelope]") {
  SECTION("the two-node ladder") {
    const Ladder l;
    Circuit c;
    l.addTo(c);
    EnvelopeOptions eo;
    eo.duration = 1200.0;
    eo.maxStep = 20.0;
    eo.record = balanceSignals(c);
    double stored = 0.0;
    const double e = heatImbalance(c, warmUp(c, eo), stored);
    CHECK(stored > 100.0);
    CHECK(std::abs(e) < 2e-3);
  }
  SECTION("two stacks of two columns on one heat sink, with a chassis and a transformer") {
    Circuit c = selenium(2, 2, true);
    c.emplace<HeatNode>("CHASSIS", HeatNodeParams{400.0, 0.0});
    c.emplace<HeatPath>("MOUNT", "SINK", "CHASSIS", 1.5);
    c.emplace<HeatPath>("SKIN", "CHASSIS", "ambient", 2.5);
    c.emplace<HeatSource>("T1", "CHASSIS", 8.0);
    EnvelopeOptions eo;
    eo.duration = 600.0;
    eo.maxStep = 10.0;
    eo.record = balanceSignals(c);
    double stored = 0.0;
    const double e = heatImbalance(c, warmUp(c, eo), stored);
    CHECK(stored > 100.0);
    // The slow states carry reltol 1e-3 per step on the stored heat.
    CHECK(std::abs(e) < 3e-3);
  }
  SECTION("a stack cooled by the ambient beside one on a heat node") {
    Circuit c = selenium(1, 1, false);
    StackOptions so;
    so.plates = 8;
    c.emplace<Stack>("SR9", c.node("a"), c.node("c"), builtin("se-25mm-36v"), so);
    EnvelopeOptions eo;
    eo.duration = 600.0;
    eo.maxStep = 10.0;
    eo.record = balanceSignals(c);
    double stored = 0.0;
    const double e = heatImbalance(c, warmUp(c, eo), stored);
    CHECK(stored > 10.0);
    CHECK(std::abs(e) < 3e-3);
  }
}

TEST_CASE("Two paralleled columns on one heat node run hotter than apart", "[thermal][envelope]") {
  // The same rectifier, its two columns each on a sink of its own, or both on one sink of the
  // same size: the shared sink carries both columns' heat through the same resistance to the
  // ambient (thermal circuits: the rise is heat times resistance), so it settles about twice
  // as far above the ambient, and every plate with it.
  EnvelopeOptions eo;
  eo.duration = 1200.0;  // ten of the sink's 120 s time constants
  const Circuit apart = selenium(2, 1, false), together = selenium(1, 2, true);
  eo.record = balanceSignals(apart);
  const EnvelopeResult ea = warmUp(apart, eo);
  eo.record = balanceSignals(together);
  const EnvelopeResult et = warmUp(together, eo);
  INFO(ea.stoppedBy << " / " << et.stoppedBy);
  REQUIRE(ea.endTime == Approx(eo.duration));
  REQUIRE(et.endTime == Approx(eo.duration));
  const double ta = apart.ambient();
  const double riseApart = ea.series["temp:SINK1"].back() - ta;
  const double riseShared = et.series["temp:SINK"].back() - ta;
  INFO("sink rise apart " << riseApart << " K, shared " << riseShared << " K");
  CHECK(riseApart == Approx(ea.series["temp:SINK2"].back() - ta).epsilon(1e-3));
  CHECK(riseShared > 1.7 * riseApart);
  CHECK(hottestPlate(et, together) > hottestPlate(ea, apart) + 0.5 * riseApart);
  // Nearly settled: the shared sink loses most of what both columns dissipate, the rest still
  // warming the plates and the sink (the plates' own heat capacity slows the network).
  const double loss = et.series["loss:SINK"].back(), heat = et.series["p:SR1"].back();
  CHECK(loss < heat);
  CHECK(loss > 0.9 * heat);
}

TEST_CASE("Thermal statements in the language", "[thermal][netlist]") {
  const std::string base =
      "voltage V1 a gnd mains rms=120V frequency=60Hz resistance=5\n"
      "stack SR1 a c type=se-25mm-36v plates=8 parallel=2 heat-node=SINK\n"
      "capacitor C1 c gnd 100uF\nresistor R1 c gnd 800\noutput c gnd load=R1\n";
  const Netlist nl = parseNetlist(base +
                                      "heat-node SINK capacity=60J/K to-ambient=4K/W\n"
                                      "heat-node CASE capacity=0.4kJ/K\n"
                                      "heat-path MOUNT SINK CASE 1.5K/W\n"
                                      "heat-path SKIN CASE ambient resistance=2.5\n"
                                      "heat-source T1 CASE power=8W\n"
                                      "record temp:SINK flow:MOUNT loss:SINK\n",
                                  "t.disc");
  const auto& sink = dynamic_cast<const HeatNode&>(*nl.circuit.find("SINK"));
  CHECK(sink.params().capacity == Approx(60.0));
  CHECK(sink.params().toAmbient == Approx(4.0));
  CHECK(dynamic_cast<const HeatNode&>(*nl.circuit.find("CASE")).params().capacity == Approx(400.0));
  CHECK(dynamic_cast<const HeatPath&>(*nl.circuit.find("MOUNT")).resistance() == Approx(1.5));
  CHECK(dynamic_cast<const HeatPath&>(*nl.circuit.find("SKIN")).toAmbient());
  CHECK(dynamic_cast<const HeatSource&>(*nl.circuit.find("T1")).power() == Approx(8.0));
  CHECK(dynamic_cast<const Stack&>(*nl.circuit.find("SR1")).heatNode() == "SINK");

  SECTION("errors are located and explained") {
    auto expect = [](const std::string& text, int line, const std::string& words) {
      std::vector<Diagnostic> d;
      try {
        parseNetlist(text, "t.disc");
      } catch (const NetlistError& e) {
        d = e.diagnostics();
      }
      INFO(text);
      REQUIRE(!d.empty());
      INFO(d.front().format());
      CHECK(d.front().where.line == line);
      CHECK_THAT(d.front().message, Contains(words));
    };
    const std::string sink = "heat-node SINK capacity=60 to-ambient=4\n";
    // base has 5 lines; the statement under test is line 6 or 7.
    expect(base + "heat-node SINK to-ambient=4\n", 6, "needs capacity=");
    expect(base + "heat-node SINK capacity=60J/K to-ambient=4W\n", 6,
           "is a power, but this parameter is a thermal resistance");
    expect(base + "heat-node SINK capacity=-5\n", 6, "heat capacity must be positive");
    expect(base + "heat-node SINK capacity=60\n", 6, "no way to the ambient");
    expect(base + sink + "heat-path P1 SINK NOWHERE 2\n", 7, "no heat node named 'NOWHERE'");
    expect(base + sink + "heat-path P1 SINK C1 2\n", 7, "'C1' is a capacitor, not a heat node");
    expect(base + sink + "heat-path P1 ambient SINK 2\n", 7, "write the ambient second");
    expect(base + sink + "heat-path P1 SINK\n", 7, "needs 2 heat node names");
    expect(base + sink + "heat-path P1 SINK ambient\n", 7, "needs resistance=");
    expect(base + sink + "heat-path P1 SINK ambient resistance=0\n", 7, "must be positive");
    expect(base + sink + "heat-source Q1 SINK power=-3W\n", 7, "power must be zero or positive");
    expect(base + sink + "heat-source Q1 SINK\n", 7, "needs power=");
    expect(base + sink + "heat-source Q1 R1 power=3W\n", 7, "'R1' is a resistor, not a heat node");
    expect(
        "voltage V1 a gnd dc=10\nstack SR1 a c type=se-25mm-36v heat-node=SNK\n"
        "resistor R1 c gnd 100\n",
        2, "no heat node named 'SNK'");
    // "ambient" names the surroundings only as a heat path's second end.
    expect(base + "heat-node ambient capacity=60 to-ambient=4\n", 6,
           "'ambient' is the word for the surroundings, not a heat node's name");
    expect(base + sink + "heat-source Q1 ambient power=3W\n", 7, "'ambient' is none");
    expect(
        "voltage V1 a gnd dc=10\nstack SR1 a c type=se-25mm-36v heat-node=ambient\n"
        "resistor R1 c gnd 100\n",
        2, "heat-node=ambient names no heat node; leave heat-node out");
  }
}

// Stack of metal-disc plates: per-plate or lumped arms, spread, thermal coupling, forming state.
#include "disc/devices/stack.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>
#include <random>
#include <type_traits>

#include "check.hpp"
#include "disc/circuit.hpp"
#include "disc/constants.hpp"
#include "disc/devices/thermal.hpp"
#include "disc/limits.hpp"
#include "junction_math.hpp"
#include "plate/plate_model.hpp"

namespace disc {

struct Stack::Plate {
  detail::PlateConstants k;
  int arm = 0, pos = 0;
  double f0 = 1.0;
  double s0 = 0.0;  // starting ageing state ln(1 + H/H0)
  int a = 0, kk = 0, j = 0, t = 0, th = 0, f = 0, g = 0;
  int neighbour = -1;  // temperature unknown of the next plate in the arm, or -1
  double gth = 0.0;    // thermal conductance to ambient, W/K
  double gc = 0.0;     // thermal conductance to the next plate, W/K
  int cell = 0;
  int sAa = 0, sAk = 0, sAj = 0, sAth = 0, sAg = 0;
  int sKa = 0, sKk = 0, sKj = 0, sKth = 0, sKg = 0;
  int sJa = 0, sJk = 0, sJj = 0, sJt = 0, sJth = 0, sJf = 0, sJg = 0;
  int sTj = 0, sTt = 0, sTth = 0;
  int sHa = 0, sHk = 0, sHj = 0, sHt = 0, sHh = 0, sHf = 0, sHg = 0;
  PairSlots coupling;
  PairSlots sinkSlots;  // loss conductance between the plate and its heat node (or ambient)
  int sFj = 0, sFh = 0, sFf = 0;
  int sGh = 0, sGg = 0;
  // Evaluation cache only, no state of the plate; the plates an analysis evaluates are its
  // private copy (System), emptied at bind().
  mutable detail::ArrheniusCache cache;
};

namespace {

enum Probe {
  kI,
  kP,
  kV,
  kTemp,
  kForm,
  kIarm,
  kVrev,
  kPplate,
  kVj,
  kAge,
  kPfwd,
  kPrev,
  kIrev,
  kHours,
  kProbeCount
};
const char* const kProbeNames[] = {"i",      "p",  "vstack", "temp", "form", "iarm", "vrev",
                                   "pplate", "vj", "age",    "pfwd", "prev", "irev", "hours"};
const char* const kProbeUnits[] = {"A", "W", "V", "K", "",  "A", "V",
                                   "W", "V", "",  "W", "W", "A", "h"};

}  // namespace

void StackOptions::validate() const {
  if (plates < 1)
    throw InputError(fmt::format("a stack needs at least one plate per arm, got {}", plates));
  if (arms < 1) throw InputError(fmt::format("a stack needs at least one arm, got {}", arms));
  if (plates > InputLimits::kPlatesPerArm)
    throw InputError(fmt::format("{} plates per arm is above the limit of {}", plates,
                                 InputLimits::kPlatesPerArm));
  if (arms > InputLimits::kArms)
    throw InputError(
        fmt::format("{} parallel arms is above the limit of {}", arms, InputLimits::kArms));
  if (plates * arms > InputLimits::kPlatesPerStack)
    throw InputError(fmt::format("{} plates x {} arms is above the limit of {} plates per stack",
                                 plates, arms, InputLimits::kPlatesPerStack));
  for (double s : {spread.js, spread.rs, spread.gsh})
    if (!(s >= 0.0 && s <= 3.0))
      throw InputError(fmt::format("spread sigmas must lie in [0, 3], got {}", s));
  if (!(forming >= 0.0 && forming <= 1.0))
    throw InputError(fmt::format("forming state must lie in [0, 1], got {}", forming));
  if (!(storedYears >= 0.0) || !std::isfinite(storedYears))
    throw InputError("stored years must be zero or positive");
  if (!(storageTemperature >= 0.0) || !std::isfinite(storageTemperature))
    throw InputError("storage temperature must be zero (type's reference) or positive, in K");
  if (!(ageHours >= 0.0) || !std::isfinite(ageHours))
    throw InputError("operating hours must be zero or positive");
  if (!(ageTemperature >= 0.0) || !std::isfinite(ageTemperature))
    throw InputError("ageing temperature must be zero (type's reference) or positive, in K");
  if (!(cooling > 0.0) || !std::isfinite(cooling))
    throw InputError(fmt::format("cooling factor must be positive, got {}", cooling));
}

Stack::Stack(std::string name, NodeId anode, NodeId cathode, PlateType type, StackOptions options)
    : DeviceBase(std::move(name), {anode, cathode}), type_(std::move(type)), opt_(options) {
  detail::namedChecks(name_, [&] {
    type_.validate();
    opt_.validate();
  });
  build();
}

Stack::~Stack() = default;
Stack::Stack(const Stack& other) = default;

void Stack::setOptions(const StackOptions& options) {
  detail::namedChecks(name_, [&] { options.validate(); });
  opt_ = options;
  build();
}

void Stack::setType(PlateType type) {
  type.validate();
  type_ = std::move(type);
  build();
}

const std::vector<DeviceParameter>& Stack::parameterTable() const {
  // Each setter changes a copy of the options and validates it through setOptions().
  auto option = [](const char* name, auto member, const char* unit = "") {
    return DeviceParameter{name,
                           [member](const Device& d) {
                             return static_cast<double>(static_cast<const Stack&>(d).opt_.*member);
                           },
                           [member, name](Device& d, double v) {
                             auto& s = static_cast<Stack&>(d);
                             StackOptions o = s.opt_;
                             using T = std::remove_reference_t<decltype(o.*member)>;
                             if constexpr (std::is_integral_v<T>) {
                               // Checked before the cast: a value beyond T is undefined.
                               if (v != std::floor(v) || v < 0 ||
                                   v > static_cast<double>(std::numeric_limits<T>::max()))
                                 throw InputError(fmt::format(
                                     "{}: {} must be a whole number, got {}", s.name_, name, v));
                             }
                             o.*member = static_cast<T>(v);
                             s.setOptions(o);
                           },
                           unit,
                           {}};
  };
  auto spread = [](const char* name, double StackSpread::*member) {
    return DeviceParameter{
        name,
        [member](const Device& d) { return static_cast<const Stack&>(d).opt_.spread.*member; },
        [member](Device& d, double v) {
          auto& s = static_cast<Stack&>(d);
          StackOptions o = s.opt_;
          o.spread.*member = v;
          s.setOptions(o);
        },
        {},
        {}};
  };
  static const std::vector<DeviceParameter> t = {
      option("plates", &StackOptions::plates),
      option("parallel", &StackOptions::arms),
      spread("spread-js", &StackSpread::js),
      spread("spread-rs", &StackSpread::rs),
      spread("spread-gsh", &StackSpread::gsh),
      option("seed", &StackOptions::seed),
      option("forming", &StackOptions::forming),
      option("stored-years", &StackOptions::storedYears).within(0.0, 200.0),
      option("stored-temp", &StackOptions::storageTemperature, "K").within(200.0, 450.0, true),
      option("hours", &StackOptions::ageHours).within(0.0, 2e6),
      option("age-temp", &StackOptions::ageTemperature, "K").within(200.0, 450.0, true),
      option("cooling", &StackOptions::cooling).within(0.01, 1e6)};
  return t;
}

double Stack::initialForming() const {
  return opt_.storedYears > 0.0
             ? detail::formingAfterStorage(type_, opt_.storedYears, opt_.storageTemperature) *
                   opt_.forming
             : opt_.forming;
}

double Stack::ageing() const {
  const double t = opt_.ageTemperature > 0.0 ? opt_.ageTemperature : type_.physics.t0;
  return detail::ageingFactor(type_, opt_.ageHours, t);
}

double Stack::scale() const {
  return opt_.mode == StackMode::Lumped ? opt_.plates : 1.0;
}

void Stack::build() {
  plates_.clear();
  std::mt19937_64 rng(opt_.seed);
  std::normal_distribution<double> normal(0.0, 1.0);
  const double t = opt_.ageTemperature > 0.0 ? opt_.ageTemperature : type_.physics.t0;
  const double s0 = detail::ageingState(type_, opt_.ageHours, t), f0 = initialForming();
  const int perArm = opt_.mode == StackMode::Lumped ? 1 : opt_.plates;
  for (int m = 0; m < opt_.arms; ++m)
    for (int i = 0; i < perArm; ++i) {
      Plate p;
      p.arm = m;
      p.pos = i;
      p.f0 = f0;
      p.s0 = s0;
      // Draw all three factors for every plate, so a zero sigma leaves the others unchanged.
      const double zj = normal(rng), zr = normal(rng), zg = normal(rng);
      p.k = detail::makePlateConstants(type_, std::exp(opt_.spread.js * zj),
                                       std::exp(opt_.spread.rs * zr),
                                       std::exp(opt_.spread.gsh * zg), 1.0);
      p.k.rth /= opt_.cooling;
      p.gth = 1.0 / p.k.rth;
      p.gc = 1.0 / type_.thermal.rthCoupling;
      plates_.push_back(p);
    }
}

void Stack::setHeatNode(std::string name) {
  if (name == HeatPath::kAmbient)
    throw InputError(fmt::format(
        "{}: heat-node=ambient names no heat node; leave heat-node out and the plates lose "
        "their heat to the ambient, or name a heat-node statement's element",
        name_));
  heatNode_ = std::move(name);
}

void Stack::prepare(const Circuit& c) {
  ambient_ = c.ambient();
  sink_ = heatNode_.empty() ? nullptr : &findHeatNode(c, heatNode_, name_);
}

std::vector<UnknownSpec> Stack::internalUnknowns() const {
  std::vector<UnknownSpec> u;
  u.reserve(plates_.size() * 6);
  for (const Plate& p : plates_) {
    const std::string id = fmt::format("{}", p.arm * opt_.plates + p.pos + 1);
    if (p.pos > 0) u.push_back({"node" + id, UnknownKind::Voltage});
    u.push_back({"j" + id, UnknownKind::Voltage});
    u.push_back({"trap" + id, UnknownKind::Voltage});
    u.push_back({"temp" + id, UnknownKind::Temperature, true});
    u.push_back({"form" + id, UnknownKind::State, true});
    u.push_back({"age" + id, UnknownKind::State, true});
  }
  return u;
}

void Stack::bind(const Binding& b) {
  a_ = b.terminals[0];
  k_ = b.terminals[1];
  ground_ = b.ground;
  sinkUnknown_ = ground_;
  std::size_t next = 0;
  int previous = -1;  // cathode-side chain node of the previous plate in this arm
  for (std::size_t n = 0; n < plates_.size(); ++n) {
    Plate& p = plates_[n];
    const bool last = opt_.mode == StackMode::Lumped || p.pos == opt_.plates - 1;
    if (p.pos > 0) previous = b.internals[next++];
    p.a = p.pos == 0 ? a_ : previous;
    p.j = b.internals[next++];
    p.t = b.internals[next++];
    p.th = b.internals[next++];
    p.f = b.internals[next++];
    p.g = b.internals[next++];
    p.cell = b.limitCell + static_cast<int>(n);
    p.cache = {};  // each run starts without a cache: results do not depend on earlier runs
    if (p.pos > 0) plates_[n - 1].kk = p.a;
    if (last) p.kk = k_;
    p.neighbour = -1;
    if (p.pos > 0) plates_[n - 1].neighbour = p.th;
  }
}

void Stack::junctionPairs(std::vector<JunctionPair>& out) const {
  // Each barrier voltage is an unknown of its own; the scale is n kT/q at the laws' lowest
  // temperature, or the rounding of the reverse-voltage ramp or the soft-breakdown slope where
  // those are smaller.
  for (const Plate& p : plates_) {
    double scale =
        std::min(p.k.n * constants::thermalVoltage(detail::kPlateLawTmin), detail::kPlateRampWidth);
    if (p.k.bdI0 > 0.0) scale = std::min(scale, p.k.bdSlope);
    out.push_back({p.j, ground_, scale});
  }
}

void Stack::declare(PatternBuilder& pb) {
  // The heat node is bound by now: every device is bound before any declares.
  sinkUnknown_ = sink_ ? sink_->unknown() : ground_;
  for (Plate& p : plates_) {
    p.sinkSlots.declare(pb, p.th, sinkUnknown_);
    pb.entry(p.a, p.a, p.sAa);
    pb.entry(p.a, p.kk, p.sAk);
    pb.entry(p.a, p.j, p.sAj);
    pb.entry(p.a, p.th, p.sAth);
    pb.entry(p.a, p.g, p.sAg);
    pb.entry(p.kk, p.a, p.sKa);
    pb.entry(p.kk, p.kk, p.sKk);
    pb.entry(p.kk, p.j, p.sKj);
    pb.entry(p.kk, p.th, p.sKth);
    pb.entry(p.kk, p.g, p.sKg);
    pb.entry(p.j, p.a, p.sJa);
    pb.entry(p.j, p.kk, p.sJk);
    pb.entry(p.j, p.j, p.sJj);
    pb.entry(p.j, p.t, p.sJt);
    pb.entry(p.j, p.th, p.sJth);
    pb.entry(p.j, p.f, p.sJf);
    pb.entry(p.j, p.g, p.sJg);
    pb.entry(p.t, p.j, p.sTj);
    pb.entry(p.t, p.t, p.sTt);
    pb.entry(p.t, p.th, p.sTth);  // the trap conductance's temperature slope
    pb.entry(p.th, p.a, p.sHa);
    pb.entry(p.th, p.kk, p.sHk);
    pb.entry(p.th, p.j, p.sHj);
    pb.entry(p.th, p.t, p.sHt);
    pb.entry(p.th, p.th, p.sHh);
    pb.entry(p.th, p.f, p.sHf);
    pb.entry(p.th, p.g, p.sHg);
    if (p.neighbour >= 0) p.coupling.declare(pb, p.th, p.neighbour);
    pb.entry(p.f, p.j, p.sFj);
    pb.entry(p.f, p.th, p.sFh);
    pb.entry(p.f, p.f, p.sFf);
    pb.entry(p.g, p.th, p.sGh);
    pb.entry(p.g, p.g, p.sGg);
  }
}

namespace {

/// Evaluates one plate with Newton limiting of its barrier voltage (when ctx asks for it) and
/// linearises the result back to the unlimited voltage.
void evaluateLimited(const detail::PlateConstants& k, double ambient, const EvalContext& ctx,
                     double vt, double uj, double ut, double th, double f, double age, int cell,
                     detail::PlateState& s, detail::ArrheniusCache* cache) {
  double ujl = uj;
  if (ctx.limits) {
    double& last = ctx.limits[cell];
    if (!std::isnan(last)) {
      double nvt, vcrit;
      detail::plateLimitScale(k, ambient + th, nvt, vcrit, cache);
      ujl = detail::limitJunction(last, uj, nvt, vcrit);
      ctx.reportJunction(uj, ujl);
    }
    last = ujl;
  }
  detail::evaluatePlate(k, ambient, vt, ujl, ut, th, f, s, cache, age);
  const double d = uj - ujl;
  if (d != 0.0) {
    s.is += s.dIsDuj * d;
    s.ib += s.dIbDuj * d;
    s.p += s.dPdUj * d;
    s.g += s.dGdUj * d;
    s.it += s.gt * d;
    s.q += s.c * d;
  }
}

}  // namespace

void Stack::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double* x = ctx.x;
  const double sc = scale(), inv = 1.0 / sc;
  detail::PlateState st;
  for (const Plate& p : plates_) {
    const double vt = (x[p.a] - x[p.kk]) * inv;
    const double uj = x[p.j], ut = x[p.t], th = x[p.th], f = x[p.f], age = x[p.g];
    evaluateLimited(p.k, ambient_, ctx, vt, uj, ut, th, f, age, p.cell, st, &p.cache);
    const double gth = p.gth;
    s.i[p.a] += st.is;
    s.i[p.kk] -= st.is;
    s.i[p.j] += st.ib + st.it - st.is;
    s.q[p.j] += st.q;
    // Without a trap branch its node is pinned to zero so the matrix stays regular.
    const bool trap = p.k.ct > 0.0;
    s.i[p.t] += trap ? -st.it : ut;
    s.q[p.t] += p.k.ct * ut;
    // The loss to the heat node (the ambient's rise is x[ground] = 0).
    const double loss = gth * (th - x[sinkUnknown_]);
    s.i[p.th] += loss - st.p;
    s.i[sinkUnknown_] -= loss;
    s.q[p.th] += p.k.cth * th;
    if (p.neighbour >= 0) {
      const double gc = p.gc, flow = gc * (th - x[p.neighbour]);
      s.i[p.th] += flow;
      s.i[p.neighbour] -= flow;
      if (s.jacobian) p.coupling.add(s.G, gc);
    }
    // The forming state is held at its start value in DC analyses: it changes over minutes.
    s.i[p.f] += ctx.dc ? f - p.f0 : -st.g;
    s.q[p.f] += f;
    // Ageing accumulates in every time-domain analysis, held at its start in DC ones.
    s.i[p.g] += ctx.dc ? age - p.s0 : -st.ageRate;
    s.q[p.g] += age;
    if (!s.jacobian) continue;
    s.G[p.sAa] += st.dIsDvt * inv;
    s.G[p.sAk] -= st.dIsDvt * inv;
    s.G[p.sAj] += st.dIsDuj;
    s.G[p.sAth] += st.dIsDth;
    s.G[p.sAg] += st.dIsDs;
    s.G[p.sKa] -= st.dIsDvt * inv;
    s.G[p.sKk] += st.dIsDvt * inv;
    s.G[p.sKj] -= st.dIsDuj;
    s.G[p.sKth] -= st.dIsDth;
    s.G[p.sKg] -= st.dIsDs;
    s.G[p.sJa] -= st.dIsDvt * inv;
    s.G[p.sJk] += st.dIsDvt * inv;
    s.G[p.sJj] += st.dIbDuj + st.gt - st.dIsDuj;
    s.G[p.sJt] -= st.gt;
    s.G[p.sJth] += st.dIbDth + st.dItDth - st.dIsDth;
    s.G[p.sJf] += st.dIbDf;
    s.G[p.sJg] += st.dIbDs - st.dIsDs;
    s.C[p.sJj] += st.c;
    s.G[p.sTj] -= st.gt;
    s.G[p.sTt] += trap ? st.gt : 1.0;
    s.G[p.sTth] -= st.dItDth;
    s.C[p.sTt] += p.k.ct;
    s.G[p.sHa] -= st.dPdVt * inv;
    s.G[p.sHk] += st.dPdVt * inv;
    s.G[p.sHj] -= st.dPdUj;
    s.G[p.sHt] -= st.dPdUt;
    s.G[p.sHh] -= st.dPdTh;
    p.sinkSlots.add(s.G, gth);
    s.G[p.sHf] -= st.dPdF;
    s.G[p.sHg] -= st.dPdS;
    s.C[p.sHh] += p.k.cth;
    if (ctx.dc) {
      s.G[p.sFf] += 1.0;
    } else {
      s.G[p.sFj] -= st.dGdUj;
      s.G[p.sFh] -= st.dGdTh;
      s.G[p.sFf] -= st.dGdF;
    }
    s.C[p.sFf] += 1.0;
    if (ctx.dc) {
      s.G[p.sGg] += 1.0;
    } else {
      s.G[p.sGh] -= st.dAgeRateDth;
      s.G[p.sGg] -= st.dAgeRateDs;
    }
    s.C[p.sGg] += 1.0;
  }
}

void Stack::evaluateCharges(const EvalContext& ctx, Stamp& s) const {
  const double* x = ctx.x;
  for (const Plate& p : plates_) {
    double q, c;
    if (p.k.cj0 > 0.0) {
      detail::depletionCharge(x[p.j], p.k.depletion, q, c);
      s.q[p.j] += q;
    }
    s.q[p.t] += p.k.ct * x[p.t];
    s.q[p.th] += p.k.cth * x[p.th];
    s.q[p.f] += x[p.f];
    s.q[p.g] += x[p.g];
  }
}

void Stack::initialState(double* x) const {
  for (const Plate& p : plates_) {
    x[p.f] = p.f0;
    x[p.g] = p.s0;
    x[p.th] = 0.0;
  }
}

void Stack::heatedBodies(std::vector<HeatedBody>& out) const {
  for (const Plate& p : plates_) {
    HeatedBody b;
    const int first = p.arm * opt_.plates + p.pos + 1;
    const int last = opt_.mode == StackMode::Lumped ? first + opt_.plates - 1 : first;
    b.label = last > first ? fmt::format("{}#{}-{}", name_, first, last)
                           : fmt::format("{}#{}", name_, first);
    b.device = name_;
    b.plates = last - first + 1;
    b.unknown = p.th;
    b.ambient = ambient_;
    b.serviceLimit = type_.ratings.maxPlateTemperature;
    b.destruction = type_.failure.destructionTemperature;
    b.mode = type_.failure.mode;
    b.mechanism = type_.failure.mechanism;
    b.heatCapacity = p.k.cth;
    b.lossConductance = p.gth;
    b.sink = sink_ ? sinkUnknown_ : -1;
    out.push_back(std::move(b));
  }
}

HeatState Stack::heatState(int k, const EvalContext& ctx) const {
  const Plate& p = plates_[static_cast<std::size_t>(k)];
  const double* x = ctx.x;
  detail::PlateState st;
  detail::evaluatePlate(p.k, ambient_, (x[p.a] - x[p.kk]) / scale(), x[p.j], x[p.t], x[p.th],
                        x[p.f], st, &p.cache, x[p.g]);
  return {ambient_ + x[p.th], st.p, st.dPdTh, ambient_ + x[sinkUnknown_]};
}

int Stack::limitCells() const {
  return static_cast<int>(plates_.size());
}

std::vector<std::string> Stack::probes() const {
  return std::vector<std::string>(std::begin(kProbeNames), std::end(kProbeNames));
}

std::string Stack::probeUnit(int k) const {
  return k >= 0 && k < kProbeCount ? kProbeUnits[k] : "";
}

int Stack::probeInstances(int k) const {
  switch (k) {
    case kTemp:
    case kForm:
    case kVrev:
    case kPplate:
    case kVj:
    case kPfwd:
    case kPrev:
    case kAge:
    case kHours:
      return plateCount();
    case kIarm:
      return opt_.arms;
    default:
      return 0;
  }
}

const Stack::Plate& Stack::plateOf(int number) const {
  const int n = number - 1;
  if (opt_.mode == StackMode::Lumped) return plates_[static_cast<std::size_t>(n / opt_.plates)];
  return plates_[static_cast<std::size_t>(n)];
}

double Stack::probeAt(int k, int index, const EvalContext& ctx) const {
  const double* x = ctx.x;
  const double sc = scale();
  if (k == kIarm) {
    for (const Plate& p : plates_)
      if (p.arm == index - 1 && p.pos == 0) {
        detail::PlateState st;
        detail::evaluatePlate(p.k, ambient_, (x[p.a] - x[p.kk]) / sc, x[p.j], x[p.t], x[p.th],
                              x[p.f], st, &p.cache, x[p.g]);
        return st.is;
      }
    return 0.0;
  }
  const Plate& p = plateOf(index);
  switch (k) {
    case kTemp:
      return ambient_ + x[p.th];
    case kForm:
      return x[p.f];
    case kVrev:
      return -(x[p.a] - x[p.kk]) / sc;
    case kVj:
      return x[p.j];
    case kAge:
      return 1.0 + p.k.ageCoefficient * x[p.g];
    case kHours:
      return type_.history.ageHoursScale * std::expm1(x[p.g]);
    case kPplate:
    case kPfwd:
    case kPrev: {
      const double vt = (x[p.a] - x[p.kk]) / sc;
      detail::PlateState st;
      detail::evaluatePlate(p.k, ambient_, vt, x[p.j], x[p.t], x[p.th], x[p.f], st, &p.cache,
                            x[p.g]);
      if (k == kPplate) return st.p;
      return (vt >= 0.0) == (k == kPfwd) ? st.p : 0.0;
    }
    default:
      return probe(k, ctx);
  }
}

double Stack::probe(int k, const EvalContext& ctx) const {
  const double* x = ctx.x;
  const double sc = scale();
  switch (k) {
    case kV:
      return x[a_] - x[k_];
    case kAge:
    case kHours: {
      // The oldest plate: its Rs factor 1 + a s, or its hours weighted to t0, H0 (e^s - 1).
      double s = 0.0;
      for (const Plate& p : plates_) s = std::max(s, x[p.g]);
      return k == kAge ? 1.0 + type_.history.ageCoefficient * s
                       : type_.history.ageHoursScale * std::expm1(s);
    }
    case kTemp: {
      double t = 0.0;
      for (const Plate& p : plates_) t = std::max(t, ambient_ + x[p.th]);
      return t;
    }
    case kForm: {
      double f = 1.0;
      for (const Plate& p : plates_) f = std::min(f, x[p.f]);
      return f;
    }
    case kVrev: {
      double v = -1e300;
      for (const Plate& p : plates_) v = std::max(v, -(x[p.a] - x[p.kk]) / sc);
      return v;
    }
    case kVj:
      return x[plates_.front().j];
    default:
      break;
  }
  // Current, dissipation and their per-arm and per-plate extremes need the plate laws.
  double total = 0.0, power = 0.0, largestArm = 0.0, largestPlate = 0.0, fwd = 0.0, rev = 0.0;
  detail::PlateState st;
  for (const Plate& p : plates_) {
    const double vt = (x[p.a] - x[p.kk]) / sc;
    detail::evaluatePlate(p.k, ambient_, vt, x[p.j], x[p.t], x[p.th], x[p.f], st, &p.cache, x[p.g]);
    power += st.p * sc;
    (vt >= 0.0 ? fwd : rev) += st.p * sc;
    largestPlate = std::max(largestPlate, st.p);
    if (p.pos == 0) {
      total += st.is;
      largestArm = std::abs(st.is) > std::abs(largestArm) ? st.is : largestArm;
    }
  }
  switch (k) {
    case kI:
      return total;
    case kP:
      return power;
    case kIarm:
      return largestArm;
    case kPplate:
      return largestPlate;
    case kPfwd:
      return fwd;
    case kPrev:
      return rev;
    case kIrev:
      // The stack's reverse (leakage) current, zero while it conducts forward.
      return std::max(0.0, -total);
    default:
      return 0.0;
  }
}

}  // namespace disc

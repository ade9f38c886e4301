// The device interface of the charge-oriented MNA engine.
//
// Every analysis solves F(x, t) = i(x, t) + d/dt q(x) = 0. A device adds its currents i and
// charges (or fluxes, or heat) q into the rows of its unknowns, and, when asked, their analytic
// Jacobians G = di/dx and C = dq/dx into matrix slots it reserved during set-up.
#pragma once

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "disc/failure.hpp"

namespace disc {

class Circuit;

/// Index of a circuit node as handed out by Circuit::node(); kGround is the reference node.
using NodeId = int;
inline constexpr NodeId kGround = -1;

/// What an unknown measures; chooses its absolute tolerance and its unit in results.
enum class UnknownKind { Voltage, Current, Temperature, State };

/// An internal unknown a device asks for (an internal node, a branch current, a thermal node,
/// a slow state variable). The full name is "<device>.<suffix>".
struct UnknownSpec {
  std::string suffix;
  UnknownKind kind;
  /// True for a state that moves far slower than the mains period (a plate's temperature, its
  /// forming state, a valve's warm-up): the periodic steady state holds it fixed and the
  /// slow-state envelope integrates it on period averages of its own equation.
  bool slow = false;
};

/// Reserves Jacobian entries during set-up. The engine writes the final value-array slot of each
/// entry into the int the device passes, once the sparse pattern is compressed.
class PatternBuilder {
 public:
  virtual ~PatternBuilder() = default;
  /// Reserve entry (row, col) of G and C; either index may be the ground sentinel.
  virtual void entry(int row, int col, int& slot) = 0;
};

/// The four Jacobian slots of a two-terminal branch between unknowns a and b.
struct PairSlots {
  int aa = 0, ab = 0, ba = 0, bb = 0;
  void declare(PatternBuilder& pb, int a, int b) {
    pb.entry(a, a, aa);
    pb.entry(a, b, ab);
    pb.entry(b, a, ba);
    pb.entry(b, b, bb);
  }
  /// Adds the derivative d/dv of a branch quantity driven by v = x[a] - x[b].
  void add(double* m, double g) const {
    m[aa] += g;
    m[ab] -= g;
    m[ba] -= g;
    m[bb] += g;
  }
};

/// What a device may read while it is evaluated.
struct EvalContext {
  const double* x = nullptr;     ///< unknowns; x[ground] == 0
  const double* xdot = nullptr;  ///< time derivatives of x (zero in DC analyses)
  double time = 0.0;             ///< s
  /// s, the clock of slow excitations (a variac schedule, a warm-up): NaN follows `time`; the
  /// periodic steady state sets it to the envelope's time and holds it over the period.
  double slowTime = std::numeric_limits<double>::quiet_NaN();
  double slowClock() const { return std::isnan(slowTime) ? time : slowTime; }
  double sourceScale = 1.0;  ///< 0..1, scales independent sources (source stepping)
  bool dc = false;           ///< true in operating-point analyses
  /// Newton limiting memory, one cell per limitCells() of each device (nullptr: no limiting).
  /// A NaN cell means "no previous iterate". A device reports through reportJunction() whether
  /// it limited its junction: Newton cannot accept an iterate whose devices were linearised
  /// elsewhere.
  double* limits = nullptr;
  /// Set when a device limited its junction in this evaluation.
  bool* limited = nullptr;
  double reltol = 1e-3;   ///< relative convergence tolerance of the current Newton solve
  double vabstol = 1e-6;  ///< absolute voltage tolerance, V

  /// Records that a junction evaluated at `raw` used `used` after limiting.
  void reportJunction(double raw, double used) const {
    if (limited && used != raw) *limited = true;
  }
};

/// Where a device adds its contributions. Rows and slots of ground land in a discard cell.
struct Stamp {
  double* i = nullptr;  ///< residual currents, one per row
  double* q = nullptr;  ///< charges / fluxes / heat, one per row
  double* G = nullptr;  ///< di/dx values, one per reserved slot
  double* C = nullptr;  ///< dq/dx values, one per reserved slot
  bool jacobian = true;
};

/// Indices handed to a device at binding.
struct Binding {
  std::vector<int> terminals;  ///< one unknown index per terminal (ground sentinel for gnd)
  std::vector<int> internals;  ///< one unknown index per UnknownSpec, in order
  int ground = 0;              ///< the ground sentinel index
  int limitCell = 0;           ///< first of this device's limitCells() in EvalContext::limits
};

class Device;

/// One exponential junction of a device (see Device::junctionPairs).
struct JunctionPair {
  int positive = 0;    ///< unknown index of the junction's positive side
  int negative = 0;    ///< unknown index of its negative side (ground sentinel: none)
  double scale = 0.0;  ///< V, smallest voltage over which the law bends (n kT/q or less)
};

/// A device parameter readable and settable by its netlist name (for sweeps without re-parsing).
/// A device's table of these is the one source of its names: the netlist parser, setParameter
/// and the Python module read it.
struct DeviceParameter {
  std::string name;
  std::function<double(const Device&)> get;
  std::function<void(Device&, double)> set;  ///< validates like the constructor
  /// SI unit symbol of the value ("A", "ohm", "F", "V", "s", "K", "K/W", ...; "" for a ratio);
  /// the netlist accepts a value with this unit and its prefixes.
  std::string unit;
  /// Earlier names of the parameter: giving one is an error whose hint names this entry.
  std::vector<std::string> retired;
  /// The range of physical sense (docs/netlist.md "Ranges of physical sense"): a value outside
  /// it is refused where it is given, by the parser, setParameter and the Python module alike.
  double lowest = -std::numeric_limits<double>::infinity();
  double highest = std::numeric_limits<double>::infinity();
  bool zeroToo = false;  ///< 0 is accepted as well: it stands for a default (ambient, ...)
  /// This entry with the range [lo, hi] (and 0, when `zero`).
  DeviceParameter within(double lo, double hi, bool zero = false) && {
    lowest = lo;
    highest = hi;
    zeroToo = zero;
    return std::move(*this);
  }
  bool inRange(double v) const;
  /// Throws InputError naming the device, the value and the range when v lies outside it.
  void checkRange(const Device& d, double v) const;
};

/// ": 'is' is now called 'saturation-current' (in A)" when `name` is a retired name of an entry
/// of `table`, else "" (for error messages).
std::string retiredParameterHint(const std::vector<DeviceParameter>& table,
                                 const std::string& name);

/// Base of every circuit element.
///
/// An analysis prepares, binds, declares and evaluates its own clone of each device (the
/// circuit itself is only read, to copy it), so what a device keeps from bind() on is state of
/// that one run. A device may memoise in `mutable` members during evaluation; bind() must empty
/// such memos, so that a run's results never depend on what its copy saw before.
class Device {
 public:
  Device(std::string name, std::vector<NodeId> terminals);
  virtual ~Device() = default;
  Device(const Device&) = default;
  Device& operator=(const Device&) = delete;

  const std::string& name() const { return name_; }
  const std::vector<NodeId>& terminals() const { return terminals_; }
  /// Short word naming the kind of device ("resistor", "diode", ...), used in messages.
  virtual std::string_view kind() const = 0;

  /// Deep copy (parameters and terminals); the copy must be bound again before use.
  virtual std::unique_ptr<Device> clone() const = 0;

  /// Called first when a circuit is compiled: look up other devices, read the ambient.
  virtual void prepare(const Circuit& /*circuit*/) {}
  /// Internal unknowns this device needs; called once before bind().
  virtual std::vector<UnknownSpec> internalUnknowns() const { return {}; }
  /// Receives the unknown indices; devices keep what they need.
  virtual void bind(const Binding& b) = 0;
  /// Reserves the Jacobian entries the device will write.
  virtual void declare(PatternBuilder& pb) = 0;
  /// Adds i, q and (if s.jacobian) G, C at ctx.x.
  virtual void evaluate(const EvalContext& ctx, Stamp& s) const = 0;
  /// Adds at least q at ctx.x (i may be added too; G and C are not asked for). The transient
  /// needs only the charges of an accepted Newton iterate; a device whose charges are cheaper
  /// than its currents overrides this (default: evaluate()).
  virtual void evaluateCharges(const EvalContext& ctx, Stamp& s) const { evaluate(ctx, s); }

  /// True when what evaluate() adds is exactly i = G x and q = C x with G and C constant (no
  /// source term, no dependence on time, temperature or history): resistors, capacitors,
  /// inductors, couplings and transformers. The engine then stamps the device once per
  /// analysis and forms its currents and charges from that stamp, without calling it.
  virtual bool isLinear() const { return false; }

  /// Terminal pairs that conduct at DC (for the floating-node check before simulation).
  virtual std::vector<std::pair<int, int>> dcPaths() const;
  /// True when the device forces a voltage between its first two terminals (loop check).
  virtual bool definesVoltage() const { return false; }

  /// Number of Newton limiting memory cells the device uses (junction voltages it limits).
  /// A limiting device evaluates its law at the limited voltage and linearises from there, so
  /// a wild Newton update of one junction does not damp the whole circuit.
  virtual int limitCells() const { return 0; }
  /// The device's exponential junctions (after bind), each as the unknowns on its positive and
  /// negative side (the ground sentinel where the junction voltage is an unknown of its own)
  /// and the smallest voltage scale its law bends over (n kT/q at the lowest temperature the
  /// device can reach, or a smaller breakdown slope). Newton measures each junction's movement
  /// in every update in units of reltol |v| + vabstol (without that it cannot tell when a
  /// junction between two nodes has converged: in a tall stack the node voltages are large and
  /// the junction's small), and bounds an exact step's second-order remainder with the scale.
  virtual void junctionPairs(std::vector<JunctionPair>& /*out*/) const {}
  /// Largest time step that resolves this device's excitation (s), or +inf.
  virtual double stepHint() const;
  /// Times in (from, to] where the device's excitation has a corner or a jump.
  virtual void breakpoints(double /*from*/, double /*to*/, std::vector<double>& /*out*/) const {}

  /// Names of recordable quantities ("i", "p", ...); "i" is the current from the first terminal
  /// through the device to the second, "p" the power the device absorbs.
  virtual std::vector<std::string> probes() const { return {"i", "p"}; }
  /// Unit symbol of probe k.
  virtual std::string probeUnit(int k) const;
  /// Parameters by netlist name (e.g. "resistance", "plates"); empty for devices without any.
  virtual const std::vector<DeviceParameter>& parameterTable() const;
  std::vector<std::string> parameterNames() const;
  /// The table entry of a name, or nullptr.
  const DeviceParameter* findParameter(const std::string& name) const;
  /// Throws InputError naming the device and suggesting a parameter for a misspelt name (or
  /// the new name for a retired one).
  double parameter(const std::string& name) const;
  void setParameter(const std::string& name, double value);

  /// Value of probe k at the context's state.
  virtual double probe(int k, const EvalContext& ctx) const = 0;
  /// How many numbered instances probe k has ("temp:SR1#3" is plate 3); 0: not numbered.
  virtual int probeInstances(int /*k*/) const { return 0; }
  /// Value of instance `index` (1-based) of probe k.
  virtual double probeAt(int k, int /*index*/, const EvalContext& ctx) const {
    return probe(k, ctx);
  }
  /// Bodies whose temperature can destroy the device (after bind and prepare), one per plate
  /// or lumped arm: every analysis checks them (disc/failure.hpp).
  virtual void heatedBodies(std::vector<HeatedBody>& /*out*/) const {}
  /// The heat balance of body k of heatedBodies() at ctx's state; the slope is taken at fixed
  /// voltages (terminal and internal).
  virtual HeatState heatState(int /*k*/, const EvalContext& /*ctx*/) const { return {}; }
  /// Sets unknowns that carry history (slow states, initial temperature rises) to their
  /// starting values, before the operating point or a cold start.
  virtual void initialState(double* /*x*/) const {}

 protected:
  std::string name_;
  std::vector<NodeId> terminals_;
};

/// A DeviceParameter from a getter and a setter of device type D.
template <class D, class G, class S>
DeviceParameter parameterOf(std::string name, G getter, S setter, std::string unit = {},
                            std::vector<std::string> retired = {}) {
  return {std::move(name),
          [getter](const Device& d) { return (static_cast<const D&>(d).*getter)(); },
          [setter](Device& d, double v) { (static_cast<D&>(d).*setter)(v); }, std::move(unit),
          std::move(retired)};
}

/// A DeviceParameter for a field of a device's parameter struct P, read through params() and
/// written through setParams() (so the device validates and re-derives).
template <class D, class P>
DeviceParameter paramsField(std::string name, double P::*member, std::string unit = {},
                            std::vector<std::string> retired = {}) {
  return {std::move(name),
          [member](const Device& d) { return static_cast<const D&>(d).params().*member; },
          [member](Device& d, double v) {
            auto& dev = static_cast<D&>(d);
            P p = dev.params();
            p.*member = v;
            dev.setParams(p);
          },
          std::move(unit), std::move(retired)};
}

/// CRTP helper giving a device its clone().
template <class Derived>
class DeviceBase : public Device {
 public:
  using Device::Device;
  std::unique_ptr<Device> clone() const override {
    return std::make_unique<Derived>(static_cast<const Derived&>(*this));
  }
};

}  // namespace disc

// A rectifier stack of metal-disc plates: N plates in series per arm, M arms in parallel.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "disc/device.hpp"
#include "disc/plate_type.hpp"

namespace disc {

class HeatNode;

namespace detail {
struct PlateConstants;
}

/// How the plates of a stack are represented.
enum class StackMode {
  PerPlate,  ///< every plate its own unknowns and drawn parameters, thermally coupled in its arm
  Lumped     ///< each arm as one plate at 1/N of the arm voltage (exact for equal plates)
};

/// Lognormal spread (standard deviations of the natural logarithm) of plate parameters.
struct StackSpread {
  double js = 0.0;   ///< saturation current
  double rs = 0.0;   ///< series resistance
  double gsh = 0.0;  ///< shunt leakage
};

struct StackOptions {
  int plates = 1;  ///< plates in series per arm
  int arms = 1;    ///< arms in parallel
  StackMode mode = StackMode::PerPlate;
  StackSpread spread;
  std::uint64_t seed = 1;           ///< seed of the spread draw (same seed, same stack)
  double forming = 1.0;             ///< initial forming state F (1 = fully formed)
  double storedYears = 0.0;         ///< if > 0: F starts at the value after this storage
  double storageTemperature = 0.0;  ///< mean temperature of that storage, K (0: type's t0)
  double ageHours = 0.0;            ///< equivalent operating hours already run
  double ageTemperature = 0.0;      ///< plate temperature of those hours, K (0: type's t0)
  double cooling = 1.0;             ///< multiplies the heat conductance to ambient (fan: 2-3)
  void validate() const;
};

/// Stack between anode (base-plate end) and cathode (counter-electrode end, the + DC side).
class Stack : public DeviceBase<Stack> {
 public:
  Stack(std::string name, NodeId anode, NodeId cathode, PlateType type, StackOptions options);
  ~Stack() override;
  Stack(const Stack& other);
  std::string_view kind() const override { return "stack"; }

  const PlateType& type() const { return type_; }
  const StackOptions& options() const { return opt_; }
  /// Changes the options (plates, arms, spread, history ...); the circuit must be run again.
  void setOptions(const StackOptions& options);
  void setType(PlateType type);
  /// plates, parallel, spread-js, spread-rs, spread-gsh, seed, forming, stored-years,
  /// stored-temp, hours, age-temp, cooling (the netlist's names).
  const std::vector<DeviceParameter>& parameterTable() const override;
  int plateCount() const { return opt_.plates * opt_.arms; }
  /// Initial forming state after the options' storage and forming settings.
  double initialForming() const;
  /// Rs ageing multiplier at the start, from the options' operating hours.
  double ageing() const;
  /// The heat node (disc/devices/thermal.hpp) the plates lose their heat to, instead of the
  /// ambient; "" for the ambient. Paralleled arms on one node warm each other through it.
  const std::string& heatNode() const { return heatNode_; }
  /// Throws InputError for "ambient": that is no heat node, and leaving the name out already
  /// sends the plates' heat there.
  void setHeatNode(std::string name);

  void prepare(const Circuit& c) override;
  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  /// Barrier (Mott-Schottky), trap, heat and forming "charges" only: no exponentials.
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override;
  void initialState(double* x) const override;
  void heatedBodies(std::vector<HeatedBody>& out) const override;
  HeatState heatState(int k, const EvalContext& ctx) const override;
  int limitCells() const override;
  void junctionPairs(std::vector<JunctionPair>& out) const override;
  std::vector<std::string> probes() const override;
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;
  int probeInstances(int k) const override;
  double probeAt(int k, int index, const EvalContext& ctx) const override;

 private:
  struct Plate;
  PlateType type_;
  StackOptions opt_;
  double ambient_ = 298.15;
  std::string heatNode_;
  const HeatNode* sink_ = nullptr;  // of the run's own circuit, from prepare()
  int sinkUnknown_ = 0;             // its temperature rise, or the ground sentinel
  std::vector<Plate> plates_;
  int a_ = 0, k_ = 0, ground_ = 0;
  void build();
  double scale() const;
  const Plate& plateOf(int number) const;  // 1-based plate number
};

}  // namespace disc

// Assembly: a circuit compiled into unknowns, a sparse pattern and evaluation buffers (private).
#pragma once

#include <Eigen/SparseCore>
#include <string>
#include <vector>

#include "disc/analysis.hpp"
#include "disc/circuit.hpp"

namespace disc::detail {

/// The compiled equation system F(x, t) = i(x, t) + d/dt q(x) of one circuit.
///
/// The system owns a private deep copy of the circuit and binds, declares and evaluates the
/// copy's devices: everything a run writes (unknown indices, matrix slots, limiting cells, the
/// devices' evaluation memos) belongs to this one run, so one circuit runs from many threads at
/// once and a parameter changed on it never reaches a run already under way.
///
/// Vectors indexed by unknown have size() + 1 entries: the last is the ground sentinel, always
/// zero in x and a discard cell in i and q. Slot arrays G and C have nnz() + 1 entries for the
/// same reason.
class System {
 public:
  explicit System(const Circuit& circuit);

  int size() const { return n_; }
  int ground() const { return n_; }
  int nodeCount() const { return static_cast<int>(nodeRows_.size()); }
  /// Unknown index of a circuit node (the ground sentinel for kGround).
  int unknownOfNode(NodeId id) const {
    return id == kGround ? n_ : nodeUnknown_[static_cast<std::size_t>(id)];
  }
  /// Unknown indices that are node voltages.
  const std::vector<int>& nodeRows() const { return nodeRows_; }
  bool isNode(int k) const { return k >= 0 && k < n_ && isNode_[static_cast<std::size_t>(k)]; }
  int nnz() const { return static_cast<int>(jac_.nonZeros()); }
  const std::string& unknownName(int k) const { return names_[static_cast<std::size_t>(k)]; }
  UnknownKind kind(int k) const { return kinds_[static_cast<std::size_t>(k)]; }
  /// True for an unknown its device declared slow (UnknownSpec::slow).
  bool isSlow(int k) const { return slow_[static_cast<std::size_t>(k)] != 0; }
  /// "node 'out'" or "unknown 'T1.i2'" for messages.
  std::string describe(int k) const;
  /// The run's own copy of the circuit.
  const Circuit& circuit() const { return circuit_; }
  const std::vector<Device*>& devices() const { return devices_; }

  /// Absolute tolerance of each unknown from its kind.
  std::vector<double> absTolerances(const Tolerances& tol) const;

  /// Evaluates every device into i, q (and G, C when jacobian).
  void evaluate(const EvalContext& ctx, bool jacobian);
  /// Evaluates every device's charges into q (i is left undefined).
  void evaluateCharges(const EvalContext& ctx);
  /// J = G + a0 C, plus gmin on the diagonal of node rows; values into the sparse matrix.
  void assemble(double a0, double gmin);
  /// out = (G + a0 C + gmin on node rows) v, from the last Jacobian evaluation (size n + 1).
  void jacobianTimes(double a0, double gmin, const double* v, double* out) const;
  /// Over the devices' junctions (Device::junctionPairs), for the update dx that led to
  /// ctx.x: the largest movement |dv| and the largest second-order remainder dv^2 / (2 scale),
  /// each in units of the junction's tolerance reltol max(|v|, |v - dv|) + vabstol.
  void junctionMeasures(const EvalContext& ctx, const double* dx, double& step,
                        double& remainder) const;
  /// Total Newton limiting cells of all devices.
  int limitCells() const { return limitCells_; }
  /// Breakpoints of all devices in (from, to], sorted and unique.
  std::vector<double> breakpoints(double from, double to) const;
  /// Throws SingularCircuitError for nodes without a DC path to gnd and voltage-defined loops.
  void checkDcTopology() const;
  /// Starting values of history-carrying unknowns (slow states, temperature rises).
  void initialState(std::vector<double>& x) const {
    for (const Device* d : devices_) d->initialState(x.data());
  }
  /// Largest sine-resolving step among the sources, or +inf.
  double naturalStep() const;

  /// Holds the given unknowns at their values in `x`: after every evaluation their rows read
  /// x_k - value_k (identity row of G, zero row of C, zero charge), so Newton keeps them where
  /// they are. The periodic steady state freezes the slow unknowns this way. What the devices
  /// computed for those rows is kept: frozenCurrents() and frozenRows().
  void freeze(const std::vector<int>& rows, const std::vector<double>& x);
  /// New held values for the frozen unknowns, from x (their rows stay frozen).
  void setFrozenValues(const std::vector<double>& x) {
    for (std::size_t k = 0; k < frozenRows_.size(); ++k)
      frozenValues_[k] = x[static_cast<std::size_t>(frozenRows_[k])];
  }
  /// Releases every frozen unknown.
  void unfreeze();
  const std::vector<int>& frozenRows() const { return frozenRows_; }
  /// The devices' currents i_k of the frozen rows at the last evaluation, in frozenRows() order.
  const std::vector<double>& frozenCurrents() const { return frozenCurrents_; }
  /// One entry of a frozen row of G or C as the devices computed it (before the replacement).
  struct FrozenEntry {
    int row;  ///< index into frozenRows()
    int col;  ///< unknown
    double g, c;
  };
  /// The frozen rows' G and C entries at the last evaluation with a Jacobian.
  const std::vector<FrozenEntry>& frozenEntries() const { return frozenEntries_; }

  const Eigen::SparseMatrix<double>& jacobian() const { return jac_; }
  /// Slot of the diagonal entry of unknown k.
  int diagonalSlot(int k) const { return diag_[static_cast<std::size_t>(k)]; }

  std::vector<double> i, q, G, C;

 private:
  /// Calls f for every device that is not linear (Device::isLinear), in order. Large circuits
  /// outgrow the core's cache: the device four places ahead is fetched while this one is evaluated
  /// (the ladder of 10000 diodes spent half its evaluation time waiting for device data otherwise).
  template <class F>
  void forEachDevice(F&& f) const {
    const std::size_t count = evaluated_.size();
    for (std::size_t k = 0; k < count; ++k) {
      if (k + 4 < count) {
        const char* next = reinterpret_cast<const char*>(evaluated_[k + 4]);
        for (int line = 0; line < 6; ++line) __builtin_prefetch(next + 64 * line);
      }
      f(evaluated_[k]);
    }
  }
  /// Stamps the linear devices once, into linearCurrents_ and linearCharges_.
  void stampLinearDevices();
  /// Replaces the frozen rows after an evaluation (see freeze()).
  void applyFrozen(const EvalContext& ctx, bool jacobian);
  std::vector<int> frozenRows_;
  std::vector<double> frozenValues_, frozenCurrents_;
  std::vector<FrozenEntry> frozenEntries_;
  std::vector<int> frozenSlots_;  // every slot in a frozen row, parallel to frozenEntries_
  /// One nonzero entry of the linear devices' G or C: its slot, row and column.
  struct LinearTerm {
    int slot, row, col;
    double value;
  };

  Circuit circuit_;  // the run's private copy (devices cloned)
  std::vector<Device*> devices_;
  std::vector<Device*> evaluated_;              // the devices that are not linear
  std::vector<LinearTerm> linearCurrents_;      // the linear devices' G (i += G x)
  std::vector<LinearTerm> linearCharges_;       // their C (q += C x)
  std::vector<int> junctionPos_, junctionNeg_;  // Device::junctionPairs of all devices
  std::vector<double> junctionHalfCurvature_;   // 1 / (2 scale) of each
  int n_ = 0;
  std::vector<int> nodeUnknown_;  // by NodeId
  std::vector<int> nodeRows_;
  std::vector<char> isNode_;
  int limitCells_ = 0;
  std::vector<std::string> names_;
  std::vector<UnknownKind> kinds_;
  std::vector<char> slow_;
  std::vector<int> diag_;
  Eigen::SparseMatrix<double> jac_;
  std::vector<std::vector<int>> terminalIndex_;  // per device
};

}  // namespace disc::detail

// Newton shooting for the periodic steady state, with the slow unknowns frozen (private).
#pragma once

#include <Eigen/Dense>
#include <memory>
#include <vector>

#include "disc/periodic.hpp"
#include "linear_solver.hpp"
#include "newton.hpp"
#include "recorder.hpp"
#include "system.hpp"

namespace disc {

struct PeriodicOrbit {
  int unknowns = 0;  // System::size() of the circuit it was found on
  double period = 0.0, startTime = 0.0;
  std::vector<double> x;     // settled start state (size unknowns + 1)
  std::vector<double> grid;  // accepted step sizes of the settled period
  std::vector<double> path;  // its accepted points (grid.size() + 1 states of unknowns + 1)
  std::vector<int> states;   // shooting variables
  Eigen::MatrixXd monodromy;
  Eigen::PartialPivLU<Eigen::MatrixXd> shootingLu;  // of monodromy - I
  double multiplier = 0.0;
};

}  // namespace disc

namespace disc::detail {

/// What the envelope needs of one periodic steady state at a fixed slow state.
struct PeriodSolution {
  /// Per slow unknown (System::frozenRows() order): the period average of its row's current
  /// i_k (its equation is i_k + dq_k/dt = 0, so dq_k/dt averages to minus this).
  std::vector<double> slowCurrent;
  /// dq_k/dx_k of each slow row at the present state (heat capacity, forming "capacity").
  std::vector<double> slowCapacity;
  /// d(slowCurrent_r)/d(slow_c): the orbit's own response to the slow state included.
  Eigen::MatrixXd slowJacobian;
  bool hasJacobian = false;
  /// Period averages of the recorded signals (the Recorder's columns), when recorded.
  PeriodicStats stats;
};

/// Solves periodic steady states of one system again and again (the envelope's slow steps),
/// keeping the last start state, step grid and state sensitivity as the warm start.
class PeriodicSolver {
 public:
  /// `slow` are the unknowns held fixed (frozen in sys); the period starts at t0 on the sources'
  /// clock.
  PeriodicSolver(System& sys, LinearSolver& ls, const PeriodicOptions& options, double period,
                 double t0, std::vector<int> slow);

  /// Solves from x (a start state; its slow entries are the fixed slow values) and leaves the
  /// settled start state in x. With `rec`, the final period is recorded (times on the sources'
  /// clock). Throws ConvergenceError / TimeStepError naming the cause.
  /// With needJacobian, out.slowJacobian is filled (a pass with sensitivities at the settled
  /// orbit); otherwise a chord iteration on the last monodromy may settle it.
  void solve(std::vector<double>& x, double slowTime, Recorder* rec, PeriodSolution& out,
             RunStats& stats, bool needJacobian = true);

  /// Records one period from a settled start x (after solve()) on the settled step grid.
  void recordPeriod(const std::vector<double>& x, double slowTime, Recorder& rec, RunStats& stats);

  /// Predicts the settled start state for slow values changed by ds (first order, from the
  /// last solve's sensitivity); x is updated in place, its slow entries included.
  void predict(std::vector<double>& x, const std::vector<double>& ds) const;

  /// The settled orbit from start x (after solve()), for a solver of a similar circuit.
  std::shared_ptr<const PeriodicOrbit> orbit(const std::vector<double>& x) const;
  /// Starts from another circuit's orbit: its grid, shooting variables and monodromy (the first
  /// passes are chord steps). False (nothing adopted) when the structure or period differ.
  bool adopt(const PeriodicOrbit& orbit);

  double period() const { return period_; }
  double startTime() const { return t0_; }
  const std::vector<int>& slowRows() const { return slow_; }
  bool solved() const { return solved_; }

 private:
  struct Pass {
    bool ok = false;
    double worstError = 0.0;  // largest truncation-error estimate in tolerances (fixed grids)
  };
  /// One period from x (in place) with state sensitivities; adaptive records the grid.
  Pass integrate(std::vector<double>& x, bool adaptive, double slowTime, Recorder* rec,
                 RunStats& stats, bool averages);
  void finish(PeriodSolution& out, bool sens);
  /// Records the last completed pass from its kept points.
  void replayPath(Recorder& rec) const;
  [[noreturn]] void throwNeutralMode() const;
  double weightedNorm(const Eigen::VectorXd& d, const std::vector<double>& x) const;

  System& sys_;
  LinearSolver& ls_;
  PeriodicOptions o_;
  double period_, t0_;
  std::vector<int> slow_;    // frozen unknowns
  std::vector<int> states_;  // fast unknowns with a charge (the shooting variables)
  std::vector<double> abstol_;
  std::vector<double> grid_;      // accepted step sizes of the last adaptive pass
  std::vector<double> path_;      // accepted points of the last completed pass on grid_ (or empty)
  std::vector<double> pathTime_;  // their times from the period's start
  double pathSlowTime_ = 0.0;     // the slow clock of that pass
  bool solved_ = false;
  bool statesKnown_ = false;
  bool haveMonodromy_ = false;
  Eigen::PartialPivLU<Eigen::MatrixXd> shootingLu_;  // of M - I
  int m_ = 0, ns_ = 0;                               // shooting variables, slow unknowns
  // Row-major, so that the charge products and the many-column solves run along rows.
  using RowMatrix = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;
  RowMatrix S_;                // n x (m + ns) sensitivity at the end of the last pass
  Eigen::MatrixXd dzds_;       // m x ns, settled state's response to the slow values
  Eigen::MatrixXd monodromy_;  // m x m
  double multiplier_ = 0.0;    // largest Floquet multiplier of monodromy_ (0: not computed)
  // Period averages of the last pass.
  std::vector<double> avgCurrent_, capacity_;
  Eigen::MatrixXd avgRowSens_;  // ns x (m + ns): average of (frozen row of G) * S
  NewtonWorkspace work_;
};

/// The start of shooting shared by the periodic analyses: the initial state with the slow
/// unknowns frozen at their starting values, the operating point or a cold start, and a short
/// transient up to the first period's start. Returns that start on the sources' clock.
double warmStart(System& sys, LinearSolver& ls, const PeriodicOptions& o, double period,
                 std::vector<double>& x, const std::vector<int>& slow, RunStats& stats);

/// Chooses the slow unknowns of a system (UnknownSpec::slow of every device).
std::vector<int> slowUnknowns(const System& sys);

/// Where one period starts on the sources' clock: a whole number of periods past the last
/// corner of the excitation (a gate switching a source on) within the first 50 periods.
double periodStart(const System& sys, double period);

}  // namespace disc::detail

// KLU wrapper.
#include "linear_solver.hpp"

#include <fmt/format.h>

#include "disc/error.hpp"
#include "system.hpp"

namespace disc::detail {

void LinearSolver::factor(const System& sys) {
  const auto& J = sys.jacobian();
  if (!analyzed_) {
    klu_.analyzePattern(J);
    if (klu_.info() != Eigen::Success)
      throw SingularCircuitError("the circuit matrix could not be analysed (structurally singular): "
                                 "look for a floating node or an unconnected device",
                                 "");
    analyzed_ = true;
  }
  klu_.factorize(J);
  const auto& common = klu_.kluCommon();
  if (klu_.info() != Eigen::Success || common.status == KLU_SINGULAR) {
    const int col = common.singular_col >= 0 && common.singular_col < sys.size()
                        ? static_cast<int>(common.singular_col)
                        : -1;
    const std::string where = col >= 0 ? sys.describe(col) : std::string("an unknown");
    throw SingularCircuitError(
        fmt::format("singular circuit matrix at {}: a node with no path to gnd, or a loop of "
                    "voltage sources",
                    where),
        col >= 0 ? sys.unknownName(col) : "");
  }
}

void LinearSolver::solve(double* rhs, int n) {
  Eigen::Map<Eigen::VectorXd> b(rhs, n);
  b = klu_.solve(b).eval();
}

}  // namespace disc::detail

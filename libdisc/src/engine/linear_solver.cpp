// KLU wrapper.
#include "linear_solver.hpp"

#include <fmt/format.h>

#include "disc/error.hpp"
#include "system.hpp"

namespace disc::detail {

bool Klu::refactorize(const Eigen::SparseMatrix<double>& m) {
  if (!m_numeric || !m_symbolic) return false;
  const int ok =
      klu_refactor(const_cast<int*>(m.outerIndexPtr()), const_cast<int*>(m.innerIndexPtr()),
                   const_cast<double*>(m.valuePtr()), m_symbolic, m_numeric, &m_common);
  return ok != 0 && m_common.status == KLU_OK;
}

bool Klu::solveInPlace(double* rhs, int n) {
  if (!m_numeric || !m_symbolic) return false;
  return klu_solve(m_symbolic, m_numeric, n, 1, rhs, &m_common) != 0;
}

double Klu::rcond() {
  if (!m_numeric || !m_symbolic) return 0.0;
  klu_rcond(m_symbolic, m_numeric, &m_common);
  return m_common.rcond;
}

void LinearSolver::fullFactor(const System& sys) {
  const auto& J = sys.jacobian();
  klu_.factorize(J);
  ++full_;
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
  rcondFull_ = klu_.rcond();
}

void LinearSolver::factor(const System& sys) {
  const auto& J = sys.jacobian();
  if (!analyzed_) {
    // No row scaling: MNA rows mix amperes, watts and 1/s, but KLU's threshold partial pivoting
    // (and the condition check below) copes, and scaling costs a tenth of every refactorisation.
    klu_.kluCommon().scale = -1;  // -1: neither scale nor re-check the matrix
    klu_.analyzePattern(J);
    if (klu_.info() != Eigen::Success)
      throw SingularCircuitError(
          "the circuit matrix could not be analysed (structurally singular): "
          "look for a floating node or an unconnected device",
          "");
    analyzed_ = true;
    fullFactor(sys);
    return;
  }
  // Reuse the pivot order while the factors stay about as well conditioned as when the pivots
  // were chosen; when a diode switching changes the magnitudes, search pivots again.
  if (klu_.hasNumeric() && klu_.refactorize(J) && klu_.rcond() > 1e-3 * rcondFull_) return;
  fullFactor(sys);
}

void LinearSolver::solve(double* rhs, int n) {
  if (!klu_.solveInPlace(rhs, n))
    throw SingularCircuitError("the circuit matrix could not be solved with its factors", "");
}

}  // namespace disc::detail

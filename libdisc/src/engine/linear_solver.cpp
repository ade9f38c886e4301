// KLU wrapper.
#include "linear_solver.hpp"

#include <fmt/format.h>

#include "disc/error.hpp"
#include "system.hpp"

namespace disc::detail {
namespace {

// The kept pivot order serves while the smallest over the largest pivot magnitude stays above
// this fraction of its value when the pivots were chosen; below it, a pivot search.
constexpr double kKeptPivotRatio = 1e-3;

}  // namespace

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

bool Klu::permutations(int* p, int* q) {
  if (!m_numeric || !m_symbolic) return false;
  return klu_extract(m_numeric, m_symbolic, nullptr, nullptr, nullptr, nullptr, nullptr, nullptr,
                     nullptr, nullptr, nullptr, p, q, nullptr, nullptr, &m_common) != 0;
}

void Klu::releaseNumeric() {
  if (m_numeric) klu_free_numeric(&m_numeric, &m_common);
  m_factorizationIsOk = 0;
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
  adoptPivotOrder(sys);
}

void LinearSolver::adoptPivotOrder(const System& sys) {
  const auto& J = sys.jacobian();
  const int n = static_cast<int>(J.cols());
  pNew_.resize(static_cast<std::size_t>(n));
  qNew_.resize(static_cast<std::size_t>(n));
  useProgram_ = false;
  if (!klu_.permutations(pNew_.data(), qNew_.data())) return;
  // The pivot search mostly returns an order it has chosen before: keep the program then.
  if (!program_.ready() || pNew_ != p_ || qNew_ != q_) {
    p_.swap(pNew_);
    q_.swap(qNew_);
    if (!program_.build(n, J.outerIndexPtr(), J.innerIndexPtr(), p_.data(), q_.data())) return;
  }
  // Same arithmetic as KLU's without pivoting, so the program's factors replace KLU's here.
  if (!program_.factor(J.valuePtr())) return;
  useProgram_ = true;
  rcondFull_ = program_.pivotRatio();
  // KLU's own factors are not used while the program's serve; a new pivot search makes new
  // ones. (Half the factor memory of a large circuit.)
  klu_.releaseNumeric();
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
  if (repivot_) {
    repivot_ = false;
  } else if (useProgram_) {
    if (program_.factor(J.valuePtr()) && program_.pivotRatio() > kKeptPivotRatio * rcondFull_)
      return;
  } else if (klu_.hasNumeric() && klu_.refactorize(J) &&
             klu_.rcond() > kKeptPivotRatio * rcondFull_) {
    return;
  }
  fullFactor(sys);
}

void LinearSolver::factor(System& sys, double a0, double gmin) {
  if (useProgram_ && !repivot_) {
    if (gminSlots_.empty())
      for (int k : sys.nodeRows()) gminSlots_.push_back(sys.diagonalSlot(k));
    if (program_.factor(sys.G.data(), sys.C.data(), a0, gminSlots_, gmin) &&
        program_.pivotRatio() > kKeptPivotRatio * rcondFull_)
      return;
  }
  sys.assemble(a0, gmin);
  factor(sys);
}

void LinearSolver::solve(double* rhs, int n) {
  if (useProgram_) {
    program_.solve(rhs);
    return;
  }
  if (!klu_.solveInPlace(rhs, n))
    throw SingularCircuitError("the circuit matrix could not be solved with its factors", "");
}

void LinearSolver::solveRows(double* b, int n, int cols) {
  if (useProgram_) {
    program_.solveRows(b, cols);
    return;
  }
  const auto un = static_cast<std::size_t>(n), uc = static_cast<std::size_t>(cols);
  columns_.resize(un * uc);
  for (std::size_t r = 0; r < un; ++r)
    for (std::size_t c = 0; c < uc; ++c) columns_[c * un + r] = b[r * uc + c];
  for (std::size_t c = 0; c < uc; ++c) solve(columns_.data() + c * un, n);
  for (std::size_t r = 0; r < un; ++r)
    for (std::size_t c = 0; c < uc; ++c) b[r * uc + c] = columns_[c * un + r];
}

}  // namespace disc::detail

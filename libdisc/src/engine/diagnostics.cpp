// Finite-difference Jacobian check.
#include "disc/diagnostics.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "disc/error.hpp"
#include "system.hpp"

namespace disc {

std::vector<std::string> unknownNames(const Circuit& circuit) {
  detail::System sys(circuit);
  std::vector<std::string> names;
  for (int k = 0; k < sys.size(); ++k) names.push_back(sys.unknownName(k));
  return names;
}

JacobianCheck checkJacobian(const Circuit& circuit, const std::vector<double>& x0, double t) {
  detail::System sys(circuit);
  const int n = sys.size();
  if (static_cast<int>(x0.size()) != n)
    throw InputError(
        fmt::format("checkJacobian: x has {} values, the circuit {} unknowns", x0.size(), n));
  std::vector<double> x(x0), zero(static_cast<std::size_t>(n) + 1, 0.0);
  x.push_back(0.0);
  EvalContext ctx;
  ctx.x = x.data();
  ctx.xdot = zero.data();
  ctx.time = t;
  JacobianCheck out;
  // The charges-only evaluation must give the full evaluation's charges.
  sys.evaluateCharges(ctx);
  const std::vector<double> qOnly = sys.q;
  sys.evaluate(ctx, true);
  for (std::size_t r = 0; r < static_cast<std::size_t>(n); ++r) {
    const double e = std::abs(qOnly[r] - sys.q[r]) / (std::abs(sys.q[r]) + 1e-300);
    if (qOnly[r] != sys.q[r]) out.maxErrorChargesOnly = std::max(out.maxErrorChargesOnly, e);
  }
  const auto& J = sys.jacobian();
  const std::size_t N = static_cast<std::size_t>(n);
  std::vector<double> Ga(N * N, 0.0), Ca(N * N, 0.0);
  for (int col = 0; col < n; ++col)
    for (int p = J.outerIndexPtr()[col]; p < J.outerIndexPtr()[col + 1]; ++p) {
      const std::size_t at = static_cast<std::size_t>(J.innerIndexPtr()[p]) * N + col;
      Ga[at] = sys.G[static_cast<std::size_t>(p)];
      Ca[at] = sys.C[static_cast<std::size_t>(p)];
    }
  std::vector<double> Gf(N * N, 0.0), Cf(N * N, 0.0);
  // Central differences at h and h/2 combined by Richardson extrapolation: truncation error
  // of order h^4, so steep exponentials and rounding can both be kept small.
  auto central = [&](std::size_t c, double h, std::vector<double>& di, std::vector<double>& dq) {
    x[c] = x0[c] + h;
    sys.evaluate(ctx, false);
    const std::vector<double> ip = sys.i, qp = sys.q;
    x[c] = x0[c] - h;
    sys.evaluate(ctx, false);
    x[c] = x0[c];
    for (std::size_t r = 0; r < N; ++r) {
      di[r] = (ip[r] - sys.i[r]) / (2.0 * h);
      dq[r] = (qp[r] - sys.q[r]) / (2.0 * h);
    }
  };
  std::vector<double> di1(N), dq1(N), di2(N), dq2(N);
  for (int col = 0; col < n; ++col) {
    const auto c = static_cast<std::size_t>(col);
    const double h = 1e-4 * (1.0 + std::abs(x0[c]));
    central(c, h, di1, dq1);
    central(c, 0.5 * h, di2, dq2);
    for (std::size_t r = 0; r < N; ++r) {
      Gf[r * N + c] = (4.0 * di2[r] - di1[r]) / 3.0;
      Cf[r * N + c] = (4.0 * dq2[r] - dq1[r]) / 3.0;
    }
  }
  auto compare = [&](const std::vector<double>& a, const std::vector<double>& f, double& worst,
                     const char* which) {
    // Rounding in a finite difference is relative to the row's largest entries, so an entry
    // many orders smaller than its row's is judged against that scale.
    std::vector<double> rowScale(N, 0.0);
    for (std::size_t k = 0; k < a.size(); ++k)
      rowScale[k / N] = std::max({rowScale[k / N], std::abs(a[k]), std::abs(f[k])});
    for (std::size_t k = 0; k < a.size(); ++k) {
      const double floor = 1e-6 * rowScale[k / N] + 1e-300;
      const double e = std::abs(a[k] - f[k]) / (std::abs(a[k]) + std::abs(f[k]) + floor);
      if (e > worst) {
        // Name the worst entry over both matrices.
        if (e > std::max(out.maxErrorG, out.maxErrorC))
          out.worst = fmt::format("{}[{}, {}]", which, sys.unknownName(static_cast<int>(k / N)),
                                  sys.unknownName(static_cast<int>(k % N)));
        worst = e;
      }
    }
  };
  compare(Ga, Gf, out.maxErrorG, "G");
  compare(Ca, Cf, out.maxErrorC, "C");
  return out;
}

}  // namespace disc

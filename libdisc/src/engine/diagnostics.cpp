// Finite-difference Jacobian check.
#include "disc/diagnostics.hpp"

#include <cmath>
#include <fmt/format.h>

#include "disc/error.hpp"
#include "system.hpp"

namespace disc {

std::vector<std::string> unknownNames(Circuit& circuit) {
  detail::System sys(circuit);
  std::vector<std::string> names;
  for (int k = 0; k < sys.size(); ++k) names.push_back(sys.unknownName(k));
  return names;
}

JacobianCheck checkJacobian(Circuit& circuit, const std::vector<double>& x0, double t) {
  detail::System sys(circuit);
  const int n = sys.size();
  if (static_cast<int>(x0.size()) != n)
    throw InputError(fmt::format("checkJacobian: x has {} values, the circuit {} unknowns",
                                 x0.size(), n));
  std::vector<double> x(x0), zero(static_cast<std::size_t>(n) + 1, 0.0);
  x.push_back(0.0);
  EvalContext ctx;
  ctx.x = x.data();
  ctx.xdot = zero.data();
  ctx.time = t;
  sys.evaluate(ctx, true);
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
  for (int col = 0; col < n; ++col) {
    const auto c = static_cast<std::size_t>(col);
    const double h = 1e-6 * (1.0 + std::abs(x0[c]));
    x[c] = x0[c] + h;
    sys.evaluate(ctx, false);
    const std::vector<double> ip = sys.i, qp = sys.q;
    x[c] = x0[c] - h;
    sys.evaluate(ctx, false);
    x[c] = x0[c];
    for (std::size_t r = 0; r < N; ++r) {
      Gf[r * N + c] = (ip[r] - sys.i[r]) / (2.0 * h);
      Cf[r * N + c] = (qp[r] - sys.q[r]) / (2.0 * h);
    }
  }
  JacobianCheck out;
  auto compare = [&](const std::vector<double>& a, const std::vector<double>& f, double& worst,
                     const char* which) {
    double scale = 0.0;
    for (double v : a) scale = std::max(scale, std::abs(v));
    const double floor = 1e-9 * scale + 1e-300;
    for (std::size_t k = 0; k < a.size(); ++k) {
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

#include "fit/levenberg_marquardt.hpp"

#include "disc/error.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

namespace disc::detail {
namespace {

Eigen::VectorXd project(const LeastSquaresProblem& p, Eigen::VectorXd z) {
  return z.cwiseMax(p.lower).cwiseMin(p.upper);
}

bool tryEvaluate(const LeastSquaresProblem& p, const Eigen::VectorXd& z, Eigen::VectorXd& r,
                 int& evaluations) {
  ++evaluations;
  try {
    r.resize(p.residuals);
    p.evaluate(z, r);
  } catch (const Cancelled&) {
    throw;  // the user stopped the fit: not a failed step
  } catch (const std::exception&) {
    return false;  // a trial point the model cannot evaluate: treated as a failed step
  }
  return r.allFinite();
}

Eigen::MatrixXd jacobianAt(const LeastSquaresProblem& p, const Eigen::VectorXd& z,
                           const Eigen::VectorXd& r0, const LeastSquaresOptions& o,
                           int& evaluations) {
  const int n = static_cast<int>(z.size());
  Eigen::MatrixXd j(p.residuals, n);
  Eigen::VectorXd rp, rm;
  for (int k = 0; k < n; ++k) {
    const double h = o.difference * std::max(1.0, std::abs(z[k]));
    Eigen::VectorXd zp = z, zm = z;
    // Keep both points inside the box: difference one-sided at a bound.
    const bool upOk = z[k] + h <= p.upper[k], downOk = z[k] - h >= p.lower[k];
    if (o.central && upOk && downOk) {
      zp[k] += h;
      zm[k] -= h;
      if (tryEvaluate(p, zp, rp, evaluations) && tryEvaluate(p, zm, rm, evaluations)) {
        j.col(k) = (rp - rm) / (2.0 * h);
        continue;
      }
    }
    const double s = upOk ? h : -h;
    zp = z;
    zp[k] += s;
    if (tryEvaluate(p, zp, rp, evaluations))
      j.col(k) = (rp - r0) / s;
    else
      j.col(k).setZero();  // no information in this direction at this point
  }
  return j;
}

}  // namespace

LeastSquaresResult levenbergMarquardt(const LeastSquaresProblem& problem, Eigen::VectorXd z0,
                                      const LeastSquaresOptions& o) {
  LeastSquaresResult res;
  res.z = project(problem, std::move(z0));
  if (!tryEvaluate(problem, res.z, res.r, res.evaluations)) {
    // The start must be evaluable; the caller's starting values are inside the model's range.
    res.cost = std::numeric_limits<double>::infinity();
    return res;
  }
  res.cost = 0.5 * res.r.squaredNorm();
  double lambda = 1e-3;
  Eigen::VectorXd rTrial;
  for (res.iterations = 0; res.iterations < o.maxIterations; ++res.iterations) {
    res.jacobian = jacobianAt(problem, res.z, res.r, o, res.evaluations);
    const Eigen::MatrixXd jtj = res.jacobian.transpose() * res.jacobian;
    const Eigen::VectorXd g = res.jacobian.transpose() * res.r;
    // Marquardt's scaling: damp each direction by its own curvature (floored so a direction
    // without information still gets a finite step).
    Eigen::VectorXd d = jtj.diagonal().cwiseMax(1e-12 * std::max(1.0, jtj.diagonal().maxCoeff()));
    bool improved = false;
    double stepNorm = 0.0;
    for (int attempt = 0; attempt < 30 && !improved; ++attempt) {
      Eigen::MatrixXd a = jtj;
      a.diagonal() += lambda * d;
      const Eigen::VectorXd step = a.ldlt().solve(-g);
      const Eigen::VectorXd trial = project(problem, res.z + step);
      stepNorm = (trial - res.z).norm();
      if (stepNorm <= o.stepTolerance * (res.z.norm() + 1.0)) break;
      if (tryEvaluate(problem, trial, rTrial, res.evaluations)) {
        const double cost = 0.5 * rTrial.squaredNorm();
        if (cost < res.cost) {
          const double drop = (res.cost - cost) / std::max(res.cost, 1e-300);
          res.z = trial;
          res.r = rTrial;
          res.cost = cost;
          lambda = std::max(lambda / 3.0, 1e-12);
          improved = true;
          if (drop < o.costTolerance) {
            res.converged = true;
          }
          break;
        }
      }
      lambda *= 4.0;
    }
    if (!improved || res.converged) {
      // No step lowers the cost (or the last barely did): a minimum to the tolerances.
      res.converged = true;
      break;
    }
  }
  res.jacobian = jacobianAt(problem, res.z, res.r, o, res.evaluations);
  return res;
}

Eigen::MatrixXd leastSquaresCovariance(const LeastSquaresResult& result) {
  const auto m = result.r.size();
  const auto n = result.z.size();
  const double s2 = m > n ? result.r.squaredNorm() / static_cast<double>(m - n)
                          : std::numeric_limits<double>::infinity();
  const Eigen::MatrixXd jtj = result.jacobian.transpose() * result.jacobian;
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(jtj);
  const Eigen::VectorXd w = eig.eigenvalues();
  const double wMax = w.size() ? w.maxCoeff() : 0.0;
  Eigen::MatrixXd cov = Eigen::MatrixXd::Zero(n, n);
  std::vector<Eigen::Index> undetermined;
  for (Eigen::Index k = 0; k < n; ++k) {
    const Eigen::VectorXd v = eig.eigenvectors().col(k);
    if (w[k] > 1e-12 * wMax && w[k] > 0.0)
      cov += v * v.transpose() / w[k];
    else
      for (Eigen::Index i = 0; i < n; ++i)
        if (std::abs(v[i]) > 1e-3) undetermined.push_back(i);
  }
  cov *= s2;
  // An undetermined direction: infinite variance for every parameter it involves.
  for (const auto i : undetermined) cov(i, i) = std::numeric_limits<double>::infinity();
  return cov;
}

}  // namespace disc::detail

// The compiled static-pivot LU against Eigen's dense LU and against KLU on the same pivot order.
#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <numeric>
#include <random>

#include "engine/linear_solver.hpp"
#include "engine/static_lu.hpp"

using disc::detail::Klu;
using disc::detail::StaticLu;

namespace {

// A random sparse matrix whose diagonal dominates, with rows and columns shuffled: the program
// given the inverse shuffle as its pivot order must factor it without pivoting.
struct Shuffled {
  Eigen::SparseMatrix<double> a;
  std::vector<int> p, q;  // row p[k] and column q[k] of a hold the k-th diagonal entry
};

Shuffled shuffledDominant(int n, double density, unsigned seed) {
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> u(-1.0, 1.0);
  std::bernoulli_distribution present(density);
  Shuffled s;
  s.p.resize(static_cast<std::size_t>(n));
  s.q.resize(static_cast<std::size_t>(n));
  std::iota(s.p.begin(), s.p.end(), 0);
  std::iota(s.q.begin(), s.q.end(), 0);
  std::shuffle(s.p.begin(), s.p.end(), rng);
  std::shuffle(s.q.begin(), s.q.end(), rng);
  std::vector<Eigen::Triplet<double>> t;
  for (int i = 0; i < n; ++i) {
    double off = 0.0;
    for (int j = 0; j < n; ++j)
      if (i != j && present(rng)) {
        const double v = u(rng);
        off += std::abs(v);
        t.emplace_back(s.p[static_cast<std::size_t>(i)], s.q[static_cast<std::size_t>(j)], v);
      }
    t.emplace_back(s.p[static_cast<std::size_t>(i)], s.q[static_cast<std::size_t>(i)],
                   (1.0 + off) * (u(rng) < 0.0 ? -1.0 : 1.0));
  }
  s.a.resize(n, n);
  s.a.setFromTriplets(t.begin(), t.end());
  s.a.makeCompressed();
  return s;
}

// An n x n matrix from triplets, compressed, and the natural order 0..n-1 as pivot order.
Eigen::SparseMatrix<double> compressed(int n, const std::vector<Eigen::Triplet<double>>& t) {
  Eigen::SparseMatrix<double> a(n, n);
  a.setFromTriplets(t.begin(), t.end());
  a.makeCompressed();
  return a;
}

std::vector<int> naturalOrder(int n) {
  std::vector<int> natural(static_cast<std::size_t>(n));
  std::iota(natural.begin(), natural.end(), 0);
  return natural;
}

}  // namespace

TEST_CASE("Static-pivot LU solves like a dense LU", "[engine][lu]") {
  // Reference: Eigen's dense partial-pivoting LU (Eigen 3.4, PartialPivLU).
  for (unsigned seed : {1u, 2u, 3u}) {
    for (double density : {0.05, 0.2}) {
      const int n = 60;
      const Shuffled s = shuffledDominant(n, density, seed);
      StaticLu lu;
      REQUIRE(lu.build(n, s.a.outerIndexPtr(), s.a.innerIndexPtr(), s.p.data(), s.q.data()));
      REQUIRE(lu.factor(s.a.valuePtr()));
      Eigen::VectorXd b = Eigen::VectorXd::LinSpaced(n, -1.0, 2.0);
      Eigen::VectorXd x = b;
      lu.solve(x.data());
      const Eigen::MatrixXd dense(s.a);
      const Eigen::VectorXd reference = dense.partialPivLu().solve(b);
      CHECK((x - reference).norm() <= 1e-12 * reference.norm());
      CHECK((dense * x - b).norm() <= 1e-12 * b.norm());
      // Refactoring new values of the same pattern gives the new solution.
      Eigen::SparseMatrix<double> scaled = s.a * 3.0;
      REQUIRE(lu.factor(scaled.valuePtr()));
      Eigen::VectorXd y = b;
      lu.solve(y.data());
      CHECK((y - reference / 3.0).norm() <= 1e-12 * reference.norm());
    }
  }
}

TEST_CASE("Static-pivot LU follows KLU's pivot order on an MNA matrix", "[engine][lu]") {
  // A voltage source's branch row has no diagonal entry: KLU must pivot, and the program must
  // reproduce KLU's solution and its pivot-ratio condition estimate (klu_rcond's definition:
  // smallest over largest pivot magnitude) with KLU's permutations.
  //   unknowns: v1, v2, v3, i_src;  1 V source from v1 to ground, 1 k / 2 k / 10 uS network.
  std::vector<Eigen::Triplet<double>> t = {{0, 0, 1e-3},   {0, 1, -1e-3}, {1, 0, -1e-3},
                                           {1, 1, 1.5e-3}, {1, 2, -5e-4}, {2, 1, -5e-4},
                                           {2, 2, 5.1e-4}, {0, 3, 1.0},   {3, 0, 1.0}};
  Eigen::SparseMatrix<double> a(4, 4);
  a.setFromTriplets(t.begin(), t.end());
  a.makeCompressed();
  Klu klu;
  klu.kluCommon().scale = -1;
  klu.analyzePattern(a);
  klu.factorize(a);
  REQUIRE(klu.info() == Eigen::Success);
  std::vector<int> p(4), q(4);
  REQUIRE(klu.permutations(p.data(), q.data()));
  StaticLu lu;
  REQUIRE(lu.build(4, a.outerIndexPtr(), a.innerIndexPtr(), p.data(), q.data()));
  REQUIRE(lu.factor(a.valuePtr()));
  CHECK(lu.pivotRatio() == Approx(klu.rcond()).epsilon(1e-12));
  Eigen::VectorXd b(4);
  b << 0.0, 0.0, 0.0, 1.0;
  Eigen::VectorXd x = b;
  lu.solve(x.data());
  const Eigen::VectorXd reference = klu.solve(b);
  CHECK((x - reference).norm() <= 1e-12 * reference.norm());
  // Node 1 sits at the source's 1 V (Kirchhoff: the source fixes it).
  CHECK(x(0) == Approx(1.0).epsilon(1e-12));
}

TEST_CASE("Static-pivot LU reports empty and vanishing pivots", "[engine][lu]") {
  // [[0, 1], [1, 0]] in natural order has structurally empty pivots: build refuses.
  Eigen::SparseMatrix<double> a(2, 2);
  std::vector<Eigen::Triplet<double>> t = {{0, 1, 1.0}, {1, 0, 1.0}};
  a.setFromTriplets(t.begin(), t.end());
  a.makeCompressed();
  const std::vector<int> natural = {0, 1}, swapped = {1, 0};
  StaticLu lu;
  CHECK_FALSE(lu.build(2, a.outerIndexPtr(), a.innerIndexPtr(), natural.data(), natural.data()));
  CHECK_FALSE(lu.ready());
  // Rows swapped it factors; then values that make the pivot zero are refused.
  REQUIRE(lu.build(2, a.outerIndexPtr(), a.innerIndexPtr(), swapped.data(), natural.data()));
  REQUIRE(lu.factor(a.valuePtr()));
  const double zeros[] = {0.0, 1.0};
  CHECK_FALSE(lu.factor(zeros));
  CHECK(lu.pivotRatio() == 0.0);
}

TEST_CASE("Static-pivot LU of a tridiagonal matrix has no fill", "[engine][lu]") {
  // A tridiagonal matrix factored in natural order keeps L and U within its band: no fill,
  // one multiply-subtract per column after the first (G. H. Golub and C. F. Van Loan, Matrix
  // Computations, section on banded LU; from memory). A chain of series junctions gives such
  // matrices, so the program's work must grow linearly with the chain.
  const int n = 50;
  std::vector<Eigen::Triplet<double>> t;
  for (int k = 0; k < n; ++k) {
    t.emplace_back(k, k, 4.0);
    if (k > 0) t.emplace_back(k, k - 1, -1.0);
    if (k + 1 < n) t.emplace_back(k, k + 1, -1.5);
  }
  const Eigen::SparseMatrix<double> a = compressed(n, t);
  const std::vector<int> natural = naturalOrder(n);
  StaticLu lu;
  REQUIRE(lu.build(n, a.outerIndexPtr(), a.innerIndexPtr(), natural.data(), natural.data()));
  CHECK(lu.factorEntries() == static_cast<std::size_t>(a.nonZeros()));
  CHECK(lu.operations() == static_cast<std::size_t>(n - 1));
  REQUIRE(lu.factor(a.valuePtr()));
  Eigen::VectorXd b = Eigen::VectorXd::Ones(n), x = b;
  lu.solve(x.data());
  CHECK((Eigen::MatrixXd(a) * x - b).norm() <= 1e-13 * b.norm());
}

TEST_CASE("Static-pivot LU reports how far elimination cancelled a pivot", "[engine][lu]") {
  // Hand values. [[1, 1], [1, 1 + d]] with d = 2^-20 (exact in binary): the second pivot is
  // (1 + d) - 1 * 1 = d, made of magnitudes (1 + d) + 1, so it cancelled by (2 + d) / d =
  // 2^21 + 1 (G. H. Golub and C. F. Van Loan, Matrix Computations, on cancellation in Gaussian
  // elimination; from memory).
  const double d = std::ldexp(1.0, -20);
  Eigen::SparseMatrix<double> a =
      compressed(2, {{0, 0, 1.0}, {0, 1, 1.0}, {1, 0, 1.0}, {1, 1, 1.0 + d}});
  const std::vector<int> natural = naturalOrder(2);
  StaticLu lu;
  REQUIRE(lu.build(2, a.outerIndexPtr(), a.innerIndexPtr(), natural.data(), natural.data()));
  REQUIRE(lu.factor(a.valuePtr()));
  CHECK(lu.pivotCancellation() == std::ldexp(1.0, 21) + 1.0);
  // A voltage source's branch row has an empty diagonal: its pivot [[g, 1], [1, 0]] -> -1/g is
  // made by elimination alone, from one product, and has cancelled nothing.
  const double g = 0.25;
  a = compressed(2, {{0, 0, g}, {0, 1, 1.0}, {1, 0, 1.0}, {1, 1, 0.0}});
  REQUIRE(lu.build(2, a.outerIndexPtr(), a.innerIndexPtr(), natural.data(), natural.data()));
  REQUIRE(lu.factor(a.valuePtr()));
  CHECK(lu.pivotCancellation() == 1.0);
}

TEST_CASE("A chain of reverse-biased junctions at a long step cancels its pivots", "[engine][lu]") {
  // Nodal matrix of a series chain whose links alternate a series resistance (25 S) and a
  // reverse-biased junction (leakage plus its capacitance over a 1 ms step, 2e-9 S), grounded at
  // the first node through the source's 25 S: eliminating across each strong link leaves the
  // weak link's conductance as the difference of numbers near 25, about 1e10 times smaller
  // (the weak mode a solve loses to round-off; the engine then checks the solve by iterative
  // refinement). With equal links g the pivots are g (k + 2) / (k + 1) and, at the open end,
  // g - g (n - 1) / n = g / n, made of g (2n - 1) / n: a cancellation of 2n - 1 (a hand value of
  // the same recurrence), the chain's length and nothing more.
  const int n = 400;
  auto chain = [n](double strong, double weak) {
    std::vector<Eigen::Triplet<double>> t;
    std::vector<double> diag(static_cast<std::size_t>(n), 0.0);
    diag[0] = strong;
    for (int k = 0; k + 1 < n; ++k) {
      const double link = k % 2 == 0 ? strong : weak;
      t.emplace_back(k, k + 1, -link);
      t.emplace_back(k + 1, k, -link);
      diag[static_cast<std::size_t>(k)] += link;
      diag[static_cast<std::size_t>(k) + 1] += link;
    }
    for (int k = 0; k < n; ++k) t.emplace_back(k, k, diag[static_cast<std::size_t>(k)]);
    const Eigen::SparseMatrix<double> a = compressed(n, t);
    const std::vector<int> natural = naturalOrder(n);
    StaticLu lu;
    REQUIRE(lu.build(n, a.outerIndexPtr(), a.innerIndexPtr(), natural.data(), natural.data()));
    REQUIRE(lu.factor(a.valuePtr()));
    return lu.pivotCancellation();
  };
  CHECK(chain(25.0, 2e-9) > 1e9);
  CHECK(chain(25.0, 25.0) == Approx(2 * n - 1).epsilon(1e-9));
}

// The stack's analytic Jacobians (electrical, thermal, forming and ageing terms) against finite
// differences, per-plate and lumped.
#include <catch2/catch.hpp>
#include <random>

#include "disc/disc.hpp"

using namespace disc;

TEST_CASE("Stack Jacobians match finite differences", "[plate][jacobian]") {
  for (StackMode mode : {StackMode::PerPlate, StackMode::Lumped}) {
    for (const char* type : {"se-25mm-square", "cuox-12mm-meter"}) {
      Circuit c;
      StackOptions o;
      o.plates = 3;
      o.arms = 2;
      o.mode = mode;
      o.spread = {0.3, 0.2, 0.4};
      o.seed = 11;
      c.emplace<Stack>("S1", c.node("a"), c.node("k"), PlateLibrary::builtIn().at(type), o);
      const auto names = unknownNames(c);
      std::mt19937 rng(5);
      for (double bias : {1.2, -20.0, 0.3}) {
        std::uniform_real_distribution<double> u(-0.1, 0.1);
        std::vector<double> x(names.size());
        for (std::size_t k = 0; k < x.size(); ++k) {
          const std::string& n = names[k];
          if (n == "a")
            x[k] = bias;
          else if (n == "k")
            x[k] = 0.0;
          else if (n.find(".temp") != std::string::npos)
            x[k] = 20.0 + 100.0 * u(rng);
          else if (n.find(".form") != std::string::npos)
            x[k] = 0.5 + u(rng);
          else if (n.find(".age") != std::string::npos)
            x[k] = 4.0 + 10.0 * u(rng);  // ln(1 + H/H0): about 50 000 h at H0 = 1000 h
          else if (n.find(".node") != std::string::npos)
            x[k] = bias * 0.5 + u(rng);
          else
            x[k] = (bias > 0 ? 0.35 : bias / 3.0) + u(rng);
        }
        const JacobianCheck j = checkJacobian(c, x, 0.0);
        INFO(type << (mode == StackMode::Lumped ? " lumped" : " per-plate") << " bias " << bias
                  << ": worst " << j.worst);
        CHECK(j.maxErrorG < 1e-5);
        CHECK(j.maxErrorC < 1e-5);
        CHECK(j.maxErrorChargesOnly < 1e-14);
      }
    }
  }
}

// Assembly: the once-stamped linear devices give what their own evaluation gives.
#include <catch2/catch.hpp>
#include <random>

#include "disc/disc.hpp"
#include "engine/system.hpp"

using namespace disc;

TEST_CASE("Linear devices stamped once give their own currents, charges and Jacobians",
          "[engine][system]") {
  // The engine stamps devices that declare themselves linear once per analysis and forms
  // i = G x and q = C x from that stamp. That must equal what each device adds when it is
  // evaluated itself, at any x: a device that declared itself linear but added a source term
  // or a state-dependent value would differ here. A diode and a source (not linear) take the
  // usual path in the same circuit.
  Circuit c;
  const NodeId a = c.node("a"), b = c.node("b"), d = c.node("d"), s1 = c.node("s1");
  c.emplace<Resistor>("R1", a, b, 47.0);
  c.emplace<Resistor>("R2", b, kGround, 1e3);
  c.emplace<Capacitor>("C1", b, kGround, 1e-6);
  c.emplace<Capacitor>("C2", a, d, 4.7e-9);
  c.emplace<Inductor>("L1", a, d, 2e-3, 0.5);
  c.emplace<Inductor>("L2", d, kGround, 3e-3);
  c.emplace<Coupling>("K1", "L1", "L2", 0.7);
  c.emplace<Transformer>("T1", d, kGround, s1, b,
                         TransformerParams{10.0, 2.0, 0.1, 5e-3, 2e-5, 8.0});
  c.emplace<VoltageSource>("V1", a, kGround, Waveform::sine(10, 50), 0.3, 1e-3);
  c.emplace<Diode>("D1", s1, kGround, DiodeParams{});
  detail::System sys(c);
  const int n = sys.size();
  const auto slots = static_cast<std::size_t>(sys.nnz()) + 1;
  std::mt19937 rng(7);
  std::uniform_real_distribution<double> u(-3.0, 3.0);
  for (int trial = 0; trial < 4; ++trial) {
    std::vector<double> x(static_cast<std::size_t>(n) + 1, 0.0), xdot = x;
    for (int k = 0; k < n; ++k) x[static_cast<std::size_t>(k)] = u(rng);
    EvalContext ctx;
    ctx.x = x.data();
    ctx.xdot = xdot.data();
    ctx.time = 1.3e-3;
    sys.evaluate(ctx, true);
    // Every device evaluated by itself into fresh arrays.
    std::vector<double> i(x.size(), 0.0), q(x.size(), 0.0), G(slots, 0.0), C(slots, 0.0);
    Stamp s{i.data(), q.data(), G.data(), C.data(), true};
    for (const Device* dev : sys.devices()) dev->evaluate(ctx, s);
    for (int k = 0; k < n; ++k) {
      const auto uk = static_cast<std::size_t>(k);
      INFO("unknown " << sys.unknownName(k));
      CHECK(sys.i[uk] == Approx(i[uk]).margin(1e-12));
      CHECK(sys.q[uk] == Approx(q[uk]).margin(1e-15));
    }
    for (std::size_t k = 0; k + 1 < slots; ++k) {
      INFO("slot " << k);
      CHECK(sys.G[k] == Approx(G[k]).margin(1e-12));
      CHECK(sys.C[k] == Approx(C[k]).margin(1e-15));
    }
    // The charges-only pass agrees too.
    std::fill(sys.q.begin(), sys.q.end(), 0.0);
    sys.evaluateCharges(ctx);
    for (int k = 0; k < n; ++k)
      CHECK(sys.q[static_cast<std::size_t>(k)] ==
            Approx(q[static_cast<std::size_t>(k)]).margin(1e-15));
  }
}

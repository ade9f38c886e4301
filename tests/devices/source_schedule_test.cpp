// A source whose level follows a schedule (a variac turned up in steps and ramps): the
// transient lands on the schedule's corners and follows its straight lines between them.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

using namespace disc;

TEST_CASE("A scheduled source's corners are time points and its ramps are linear",
          "[devices][schedule]") {
  for (Method m : {Method::Trapezoidal, Method::Bdf2}) {
    Circuit c;
    Waveform w = Waveform::dc(100.0);
    w.schedule({{0.0, 0.0}, {10e-3, 0.5}, {20e-3, 0.5}, {23e-3, 1.0}});
    c.emplace<VoltageSource>("V1", c.node("a"), kGround, w);
    c.emplace<Resistor>("R1", c.node("a"), kGround, 1e3);
    TransientOptions o;
    o.stop = 40e-3;
    o.method = m;
    o.start = Start::Cold;
    o.record = {"v:a"};
    const Result r = transient(c, o);
    const auto& t = r.time();
    INFO(methodName(m));
    for (auto [corner, level] :
         {std::pair{10e-3, 50.0}, std::pair{20e-3, 50.0}, std::pair{23e-3, 100.0}}) {
      // A step landing on a corner is recorded at the corner's left limit (one rounding below).
      const auto it = std::find_if(t.begin(), t.end(), [corner = corner](double x) {
        return std::abs(x - corner) <= 4e-16 * corner;
      });
      REQUIRE(it != t.end());
      CHECK(r["v:a"][static_cast<std::size_t>(it - t.begin())] == Approx(level).epsilon(1e-9));
    }
    for (std::size_t k = 0; k < t.size(); ++k)
      CHECK(r["v:a"][k] == Approx(100.0 * w.level(t[k])).margin(1e-6));
  }
}

// IEC 60063 preferred numbers (Preferred number series for resistors and capacitors).
#include <algorithm>
#include <catch2/catch.hpp>

#include "disc/error.hpp"
#include "disc/preferred_values.hpp"

using namespace disc;

TEST_CASE("E12 and E24 decades are the IEC 60063 lists", "[analysis][preferred]") {
  // IEC 60063 (Preferred number series for resistors and capacitors), E12 and E24.
  const std::vector<double> e12 = {1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2};
  const std::vector<double> e24 = {1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
                                   3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1};
  CHECK(seriesDecade(ESeries::E12) == e12);
  CHECK(seriesDecade(ESeries::E24) == e24);
  // Every E12 value is also an E24 value (E24 refines E12).
  for (double v : e12) CHECK(std::find(e24.begin(), e24.end(), v) != e24.end());
}

TEST_CASE("Nearest preferred value on a logarithmic scale", "[analysis][preferred]") {
  // The worked dropping-resistor example's 12.67 ohm (docs/sources.md, silicon replacement).
  CHECK(nearestPreferred(12.67, ESeries::E24) == 13.0);
  CHECK(nearestPreferred(12.67, ESeries::E12) == 12.0);
  CHECK(nearestPreferred(1190.0, ESeries::E12) == 1200.0);
  CHECK(nearestPreferred(0.0963, ESeries::E24) == 0.1);
  CHECK(nearestPreferred(9.5, ESeries::E12) == 10.0);
  CHECK(nearestPreferred(4.7e6, ESeries::E12) == 4.7e6);
  REQUIRE_THROWS_AS(nearestPreferred(0.0, ESeries::E12), InputError);
  REQUIRE_THROWS_AS(nearestPreferred(-5.0, ESeries::E24), InputError);
}

// The trace reader: units, and every kind of bad input located by line and column.
#include <catch2/catch.hpp>

#include <limits>

#include "disc/plate_fit.hpp"
#include "disc/trace.hpp"

using disc::TraceError;

namespace {

/// Parses `text` and returns the TraceError it must raise.
TraceError traceErrorOf(const std::string& text) {
  try {
    disc::parseTrace(text, "bench.csv");
  } catch (const TraceError& e) {
    return e;
  }
  FAIL("no TraceError for:\n" << text);
  throw std::logic_error("unreachable");
}

}  // namespace

TEST_CASE("trace: columns in any order, units converted to SI", "[fit][trace]") {
  const auto t = disc::parseTrace(
      "# bench sweep, invented for the test\n"
      "current [mA]; temperature [degC]; voltage [mV]; time [ms]\n"
      "1.5; 25; 700; 0\n"
      "\n"
      "-0.2; 25.5; -20000; 2.5\n",
      "bench.csv");
  REQUIRE(t.size() == 2);
  CHECK(t.current[0] == Approx(1.5e-3));
  CHECK(t.voltage[1] == Approx(-20.0));
  CHECK(t.temperature[1] == Approx(298.65));
  CHECK(t.time[1] == Approx(2.5e-3));
  CHECK(t.lines == std::vector<int>{3, 5});
  CHECK(t.dynamic());
}

TEST_CASE("trace: extra columns are ignored, tabs separate", "[fit][trace]") {
  const auto t = disc::parseTrace("sample\tvoltage [V]\tcurrent [uA]\n1\t-5\t-30\n", "x");
  CHECK(t.current[0] == Approx(-30e-6));
  CHECK_FALSE(t.dynamic());
}

TEST_CASE("trace: bad input is located by line and column", "[fit][trace]") {
  SECTION("empty file") {
    const auto e = traceErrorOf("");
    CHECK_THAT(e.what(), Catch::Contains("the file is empty"));
  }
  SECTION("comments only") {
    CHECK_THAT(traceErrorOf("# nothing\n# here\n").what(), Catch::Contains("empty"));
  }
  SECTION("missing current column") {
    const auto e = traceErrorOf("voltage [V], time [s]\n1, 0\n");
    CHECK(e.line() == 1);
    CHECK_THAT(e.what(), Catch::Contains("no current column"));
  }
  SECTION("column without unit") {
    const auto e = traceErrorOf("voltage [V], current\n1, 2\n");
    CHECK(e.column() == 2);
    CHECK_THAT(e.what(), Catch::Contains("has no unit"));
  }
  SECTION("unknown unit") {
    const auto e = traceErrorOf("voltage [V], current [furlong]\n1, 2\n");
    CHECK_THAT(e.what(), Catch::Contains("unknown unit 'furlong'"));
  }
  SECTION("non-numeric cell") {
    const auto e = traceErrorOf("voltage [V], current [mA]\n0.5, 1\n0.6, abc\n");
    CHECK(e.line() == 3);
    CHECK(e.column() == 2);
    CHECK(e.columnName() == "current [mA]");
    CHECK_THAT(e.what(), Catch::Contains("bench.csv:3: column 2 'current [mA]': 'abc' is not a "
                                         "number"));
  }
  SECTION("decimal comma") {
    const auto e = traceErrorOf("voltage [V]; current [mA]\n0,5; 1\n");
    CHECK_THAT(e.what(), Catch::Contains("decimal separator"));
  }
  SECTION("NaN and infinity") {
    CHECK(traceErrorOf("voltage [V], current [mA]\nnan, 1\n").column() == 1);
    CHECK_THAT(traceErrorOf("voltage [V], current [mA]\n1, inf\n").what(),
               Catch::Contains("not a finite number"));
  }
  SECTION("empty cell") {
    CHECK(traceErrorOf("voltage [V], current [mA]\n1, \n").column() == 2);
  }
  SECTION("short row") {
    const auto e = traceErrorOf("voltage [V], current [mA]\n1, 2\n3\n");
    CHECK(e.line() == 3);
    CHECK_THAT(e.what(), Catch::Contains("1 cells in this row"));
  }
  SECTION("time going backwards") {
    const auto e = traceErrorOf("time [s], voltage [V], current [mA]\n0, 1, 2\n0, 1, 2\n");
    CHECK(e.line() == 3);
    CHECK_THAT(e.what(), Catch::Contains("time does not increase"));
  }
  SECTION("no data rows") {
    CHECK_THAT(traceErrorOf("voltage [V], current [mA]\n").what(), Catch::Contains("no data rows"));
  }
  SECTION("temperature below absolute zero") {
    CHECK_THAT(traceErrorOf("voltage [V], current [mA], temperature [degC]\n1, 2, -300\n").what(),
               Catch::Contains("absolute zero"));
  }
}

TEST_CASE("trace: columns of numbers are checked as a file's rows are", "[fit][trace]") {
  using V = std::vector<double>;
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const auto errorOf = [](V v, V i, V t, V k) -> TraceError {
    try {
      disc::traceFromColumns(std::move(v), std::move(i), std::move(t), std::move(k), "probe");
    } catch (const TraceError& e) {
      return e;
    }
    FAIL("no TraceError");
    throw std::logic_error("unreachable");
  };
  auto e = errorOf({0.5, 0.7}, {1e-3, nan}, {}, {});
  CHECK(e.line() == 2);
  CHECK(e.columnName() == "current");
  CHECK_THAT(e.what(), Catch::Contains("probe:2: current nan A is not a finite number"));
  e = errorOf({0.5, 0.7}, {1e-3, 2e-3}, {0.0, 0.0}, {});
  CHECK(e.line() == 2);
  CHECK_THAT(e.what(), Catch::Contains("does not increase"));
  CHECK_THAT(errorOf({0.5}, {1e-3}, {}, {-1.0}).what(), Catch::Contains("below absolute zero"));
  CHECK_THAT(errorOf({0.5, 0.7}, {1e-3}, {}, {}).what(),
             Catch::Contains("current has 1 values but voltage has 2"));
  CHECK_THAT(errorOf({}, {}, {}, {}).what(), Catch::Contains("no points"));
  const auto t = disc::traceFromColumns({0.5, 0.7}, {1e-3, 2e-3}, {0.0, 1e-3}, {}, "probe");
  CHECK(t.lines == std::vector<int>{1, 2});
  CHECK(t.dynamic());
}

TEST_CASE("trace: a file that cannot be read", "[fit][trace]") {
  CHECK_THROWS_AS(disc::loadTrace("/no/such/trace.csv"), TraceError);
}

TEST_CASE("fit: traces a fit cannot use are refused with a reason", "[fit][trace]") {
  disc::FitOptions o;
  SECTION("a single point") {
    const auto t = disc::parseTrace("voltage [V], current [mA]\n1, 50\n", "one.csv");
    CHECK_THROWS_WITH(disc::fitPlate({t}, o), Catch::Contains("only 1 data row"));
  }
  SECTION("no reverse part") {
    std::string text = "voltage [V], current [mA]\n";
    for (int k = 1; k <= 20; ++k)
      text += std::to_string(0.05 * k) + ", " + std::to_string(k) + "\n";
    const auto t = disc::parseTrace(text, "forward-only.csv");
    try {
      disc::fitPlate({t}, o);
      FAIL("no error");
    } catch (const TraceError& e) {
      CHECK_THAT(e.what(), Catch::Contains("forward-only.csv:21: the trace has no reverse part"));
    }
  }
  SECTION("no forward part") {
    std::string text = "voltage [V], current [mA]\n";
    for (int k = 1; k <= 20; ++k)
      text += std::to_string(-1.0 * k) + ", -" + std::to_string(0.1 * k) + "\n";
    CHECK_THROWS_WITH(disc::fitPlate({disc::parseTrace(text, "r.csv")}, o),
                      Catch::Contains("no forward part"));
  }
  SECTION("bad options") {
    o.plates = 0;
    CHECK_THROWS_AS(disc::fitPlate({}, o), disc::InputError);
  }
}

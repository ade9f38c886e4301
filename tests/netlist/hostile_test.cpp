// Hostile netlists, plate files and traces: each is refused with a location and a bounded
// message, never a crash, a hang or a read of something that is not a regular file.
#include <sys/stat.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>

#include "disc/disc.hpp"

using namespace disc;
using Catch::Matchers::Contains;

namespace {

std::string dirFor(const std::string& name) {
  const std::string dir = std::string(DISC_TEST_OUT_DIR) + "/hostile/" + name;
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

void put(const std::string& path, const std::string& text) {
  std::ofstream(path, std::ios::binary) << text;
}

std::vector<Diagnostic> errorsOfFile(const std::string& path,
                                     IncludePolicy policy = IncludePolicy::Trusted) {
  try {
    loadNetlist(path, policy);
  } catch (const NetlistError& e) {
    return e.diagnostics();
  }
  FAIL("the netlist was accepted: " << path);
  return {};
}

std::vector<Diagnostic> errorsOf(const std::string& text) {
  try {
    parseNetlist(text, "h.disc");
  } catch (const NetlistError& e) {
    return e.diagnostics();
  }
  FAIL("the netlist was accepted:\n" << text.substr(0, 200));
  return {};
}

const std::string kOk = "voltage V1 a gnd dc=10V\nresistor R1 a gnd 1k\n";

}  // namespace

TEST_CASE("Text that is not UTF-8 is refused at parse time with its location",
          "[netlist][hostile]") {
  const auto d = errorsOf(kOk + "title \"caf\xe9\"\n");
  REQUIRE(d.size() == 1);
  CHECK(d[0].where.line == 3);
  CHECK(d[0].where.column == 11);
  CHECK_THAT(d[0].message, Contains("not UTF-8"));
  // The shown line escapes the byte rather than passing it to a terminal or a JSON writer.
  CHECK_THAT(d[0].lineText, Contains("\\xe9"));
  // Overlong forms and surrogates are not UTF-8 either (RFC 3629, section 3).
  CHECK(errorsOf(kOk + "title \"\xc0\xaf\"\n")[0].where.column == 8);
  CHECK(errorsOf(kOk + "title \"\xed\xa0\x80\"\n")[0].where.column == 8);
  CHECK_NOTHROW(parseNetlist(kOk + "title \"caf\xc3\xa9 \xe2\x82\xac\"\n"));
}

TEST_CASE("A byte-order mark is accepted", "[netlist][hostile]") {
  const Netlist nl = parseNetlist("\xef\xbb\xbf" + kOk + "title \"t\"\n");
  CHECK(nl.circuit.devices().size() == 2);
  CHECK(parseTrace("\xef\xbb\xbfvoltage [V],current [mA]\n1,2\n").size() == 1);
}

TEST_CASE("Messages quote at most about 80 characters and escape control bytes",
          "[netlist][hostile]") {
  const std::string huge(5'000'000, 'x');
  const auto d = errorsOf(kOk + huge + " a b\n");
  REQUIRE(d.size() == 1);
  CHECK(d[0].format().size() < 600);
  CHECK_THAT(d[0].message, Contains("..."));
  const auto e = errorsOf(kOk + "resi\x1b[2Jstor R2 a gnd 1k\n");
  CHECK(d[0].format().find('\x1b') == std::string::npos);
  CHECK_THAT(e[0].format(), Contains("\\x1b"));
  try {
    parseTrace("voltage [V],current [mA]\n1," + huge + "\n", "t.csv");
    FAIL("a 5 MB cell was accepted");
  } catch (const TraceError& t) {
    CHECK(std::string(t.what()).size() < 400);
    CHECK(t.line() == 2);
    CHECK(t.column() == 2);
  }
}

TEST_CASE("include finds cycles through real paths and refuses what is not a regular file",
          "[netlist][hostile]") {
  const std::string dir = dirFor("include");
  std::filesystem::create_directories(dir + "/sub");
  put(dir + "/self.disc", "include \"./self.disc\"\ninclude \"sub/../self.disc\"\n" + kOk);
  const auto d = errorsOfFile(dir + "/self.disc");
  REQUIRE(d.size() == 2);
  CHECK_THAT(d[0].message, Contains("include cycle"));
  CHECK(d[1].where.line == 2);
  std::filesystem::create_symlink(dir + "/self.disc", dir + "/link.disc");
  put(dir + "/vialink.disc", "include \"link.disc\"\n");
  put(dir + "/link-loop.disc", "include \"link.disc\"\n");
  CHECK_THAT(errorsOfFile(dir + "/link.disc")[0].message, Contains("include cycle"));

  put(dir + "/dir.disc", "include \"sub\"\n" + kOk);
  CHECK_THAT(errorsOfFile(dir + "/dir.disc")[0].message, Contains("directory"));
  REQUIRE(mkfifo((dir + "/pipe.disc").c_str(), 0600) == 0);
  put(dir + "/fifo.disc", "include \"pipe.disc\"\n" + kOk);
  const auto f = errorsOfFile(dir + "/fifo.disc");
  CHECK_THAT(f[0].message, Contains("FIFO"));
  CHECK(f[0].where.line == 1);
  CHECK(f[0].where.column == 9);
  put(dir + "/dev.disc", "include \"/dev/zero\"\n" + kOk);
  CHECK_THAT(errorsOfFile(dir + "/dev.disc")[0].message, Contains("device"));
  CHECK_THROWS_WITH(loadNetlist(dir + "/pipe.disc"), Contains("FIFO"));
  CHECK_THROWS_WITH(loadNetlist("/dev/zero"), Contains("device"));
  CHECK_THROWS_WITH(loadTrace(dir + "/pipe.disc"), Contains("FIFO"));
  CHECK_THROWS_WITH(PlateLibrary::load(dir + "/pipe.disc"), Contains("FIFO"));
}

TEST_CASE("A file that is no netlist is reported once, without echoing its lines",
          "[netlist][hostile]") {
  const std::string dir = dirFor("foreign");
  std::string secret;
  for (int k = 0; k < 40; ++k) secret += "secret" + std::to_string(k) + ":x:1000:1000::/home\n";
  put(dir + "/secret.txt", secret);
  put(dir + "/main.disc", "include \"secret.txt\"\n" + kOk);
  const auto d = errorsOfFile(dir + "/main.disc");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("not a netlist"));
  CHECK(d[0].format().find("secret") == d[0].format().rfind("secret.txt"));
}

TEST_CASE("The include limits: depth and files read", "[netlist][hostile]") {
  const std::string dir = dirFor("depth");
  const int n = InputLimits::kIncludeDepth + 4;
  for (int k = 0; k < n; ++k)
    put(dir + "/f" + std::to_string(k) + ".disc",
        k + 1 < n ? "include \"f" + std::to_string(k + 1) + ".disc\"\n" : kOk);
  const auto d = errorsOfFile(dir + "/f0.disc");
  REQUIRE(!d.empty());
  CHECK_THAT(d[0].message, Contains("nest deeper than"));
  CHECK(d[0].where.file == dir + "/f" + std::to_string(InputLimits::kIncludeDepth) + ".disc");
  CHECK(d[0].where.line == 1);
  // Two includes of one file per level would read 2^depth files: the count limit stops it.
  for (int k = 0; k < 12; ++k)
    put(dir + "/g" + std::to_string(k) + ".disc", "include \"g" + std::to_string(k + 1) +
                                                      ".disc\"\ninclude \"g" +
                                                      std::to_string(k + 1) + ".disc\"\n");
  put(dir + "/g12.disc", "# empty\n");
  CHECK_THAT(errorsOfFile(dir + "/g0.disc")[0].message, Contains("include and use files"));
}

TEST_CASE("The size and count limits are refused with a location", "[netlist][hostile]") {
  const std::string dir = dirFor("size");
  put(dir + "/big.disc", std::string(InputLimits::kNetlistBytes + 1, '#'));
  CHECK_THROWS_WITH(loadNetlist(dir + "/big.disc"), Contains("above the limit"));
  put(dir + "/inc.disc", "include \"big.disc\"\n" + kOk);
  const auto d = errorsOfFile(dir + "/inc.disc");
  CHECK(d[0].where.line == 1);
  CHECK_THAT(d[0].message, Contains("above the limit"));

  // Elements.
  std::string many = "voltage V1 a gnd dc=1V\n";
  for (int k = 0; k <= InputLimits::kElements; ++k)
    many += "resistor R" + std::to_string(k) + " a gnd 1k\n";
  const auto e = errorsOf(many);
  REQUIRE(e.size() == 1);
  CHECK(e[0].where.line == InputLimits::kElements + 1);
  CHECK_THAT(e[0].message, Contains("elements in one circuit"));

  // Plates per arm, arms, plates per stack.
  auto stackError = [&](const std::string& params) {
    return errorsOf(kOk + "stack S1 a gnd type=se-25mm-square " + params + "\n");
  };
  auto plates = stackError("plates=1e6");
  CHECK(plates[0].where.column == 36);
  CHECK_THAT(plates[0].message, Contains("from 1 to 1000"));
  CHECK_THAT(stackError("parallel=1e9")[0].message, Contains("from 1 to 100"));
  CHECK_THAT(stackError("plates=1000 parallel=100")[0].message, Contains("plates per stack"));

  // Plate types in one file and in one netlist.
  std::string types = "{\"schema\": 1, \"types\": [";
  for (int k = 0; k <= InputLimits::kPlateTypes; ++k)
    types += (k ? ",{\"name\": \"t" : "{\"name\": \"t") + std::to_string(k) + "\"}";
  types += "]}";
  put(dir + "/types.json", types);
  put(dir + "/use.disc", "use \"types.json\"\n" + kOk);
  const auto t = errorsOfFile(dir + "/use.disc");
  CHECK(t[0].where.column == 5);
  CHECK_THAT(t[0].message, Contains("types.json:1:15"));
  CHECK_THAT(t[0].message, Contains("above the limit"));
}

TEST_CASE("Element and node names keep to a documented character set", "[netlist][hostile]") {
  for (const char* bad : {"../../x", "/abs/x", "a:b", "a,b", "R#1", "\"q r\"", "-lead"}) {
    INFO(bad);
    const auto d = errorsOf(kOk + "resistor " + std::string(bad) + " a gnd 1k\n");
    CHECK_THAT(d[0].message, Contains("not a valid resistor name"));
    CHECK(d[0].where.column == 10);
  }
  CHECK_THAT(errorsOf(kOk + "resistor R2 a ../b 1k\nresistor R3 ../b gnd 1\n")[0].message,
             Contains("not a valid node name"));
  CHECK_THAT(errorsOf(kOk + "resistor " + std::string(65, 'R') + " a gnd 1k\n")[0].message,
             Contains("1 to 64"));
  CHECK(validName("SR1.arm-2_b+"));
  // Output file stems never leave their folder whatever the name.
  CHECK(safeFileStem("../../x") == "_.._.._x");
  CHECK(safeFileStem("/abs/x") == "_abs_x");
  CHECK(safeFileStem("") == "_");
  CHECK(safeFileStem("SR1") == "SR1");
}

TEST_CASE("A confined reading stays inside the netlist's folder", "[netlist][hostile]") {
  const std::string dir = dirFor("sandbox");
  std::filesystem::create_directories(dir + "/n/sub");
  put(dir + "/outside.disc", kOk);
  put(dir + "/n/sub/inside.disc", kOk);
  put(dir + "/n/up.disc", "include \"../outside.disc\"\n");
  put(dir + "/n/abs.disc", "include \"" + dir + "/outside.disc\"\n");
  put(dir + "/n/in.disc", "include \"sub/inside.disc\"\n");
  std::filesystem::create_symlink(dir + "/outside.disc", dir + "/n/link.disc");
  put(dir + "/n/vialink.disc", "include \"link.disc\"\n");
  for (const char* f : {"/n/up.disc", "/n/abs.disc", "/n/vialink.disc"}) {
    INFO(f);
    CHECK_NOTHROW(loadNetlist(dir + f));
    const auto d = errorsOfFile(dir + f, IncludePolicy::Confined);
    CHECK_THAT(d[0].message, Contains("outside the netlist's folder"));
    CHECK(d[0].where.column == 9);
  }
  CHECK_NOTHROW(loadNetlist(dir + "/n/in.disc", IncludePolicy::Confined));
  put(dir + "/n/use.disc", "use \"/etc/passwd\"\n" + kOk);
  CHECK_THAT(errorsOfFile(dir + "/n/use.disc", IncludePolicy::Confined)[0].message,
             Contains("outside the netlist's folder"));
}

TEST_CASE("Plate-type JSON errors carry file:line:col", "[netlist][hostile][plate]") {
  auto messageOf = [](const std::string& json) {
    try {
      PlateLibrary::fromJson(json, "p.json");
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    FAIL("accepted: " << json);
    return std::string();
  };
  CHECK_THAT(messageOf("{\"name\": \"x\",\n \"physics\": {\"ideality\": 2,}}"),
             Contains("p.json:2:28: not valid JSON"));
  CHECK_THAT(messageOf("{\"name\": \"x\",\n \"physics\": {\"ideality\": \"two\"}}"),
             Contains("p.json:2:14: plate type 'x': \"ideality\" must be a number"));
  CHECK_THAT(messageOf("{\"name\": \"x\",\n\"physics\": {\"ideality\": 1e400}}"),
             Contains("p.json:2:25"));
  CHECK_THAT(messageOf("{\"name\": \"x\", \"material\": 5}"), Contains("p.json:1:15"));
  CHECK_THAT(messageOf("{\"name\": 5}"), Contains("p.json:1:2"));
  CHECK_THAT(messageOf("{\"types\": 5}"), Contains("p.json:1:2"));
  CHECK_THAT(messageOf("{\"schema\": \"x\", \"types\": []}"), Contains("p.json:1:2"));
  CHECK_THAT(messageOf("{\"name\": \"../x\"}"), Contains("not a valid plate-type name"));
  CHECK_THAT(messageOf("{\"name\": \"x\", \"physics\": {\"ideality\": 99}}"),
             Contains("outside its range"));
  CHECK_THAT(messageOf("\"\xff\""), Contains("p.json:1:"));
  CHECK_NOTHROW(PlateLibrary::fromJson("\xef\xbb\xbf{\"name\": \"x\"}"));
}

TEST_CASE("A signal recorded twice is one column", "[netlist][hostile][engine]") {
  Netlist nl = parseNetlist(kOk);
  TransientOptions o;
  o.stop = 1e-3;
  o.record = {"v:a", "v:a", "i:R1", "v:a"};
  const Result r = transient(nl.circuit, o);
  CHECK(r.signals().size() == 2);
  CHECK(r["v:a"].size() == r.time().size());
  CHECK(r["v:a"].back() == Approx(10.0));
}

TEST_CASE("A run's step budget: refused up front with its estimate, and enforced while it runs",
          "[netlist][hostile][engine]") {
  // Up front: 1 s over a 1 ms largest step is at least 1000 steps.
  Netlist nl = parseNetlist(kOk + "run transient stop=1s max-step=1ms max-steps=5000\n", "b.disc");
  const StepEstimate e = estimateSteps(nl.circuit, nl.analyses.back().transient);
  CHECK(e.minimumSteps == Approx(1000.0));
  CHECK(e.budget == 5000);
  CHECK(e.limitedBy == "max-step");
  auto d = errorsOf(kOk + "run transient stop=1s max-step=1ms max-steps=999\n");
  REQUIRE(d.size() == 1);
  CHECK(d[0].where.line == 3);
  CHECK_THAT(d[0].message, Contains("at least 1e+03 steps") && Contains("max-steps="));
  // A 50 Hz source sets the largest step to a twentieth of its period (1 ms).
  d = errorsOf(
      "voltage V1 a gnd sine rms=1V frequency=50Hz\nresistor R1 a gnd 1k\n"
      "run transient stop=10s max-steps=9000\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("set by the period of 'V1'"));
  CHECK(errorsOf(kOk + "run transient stop=1s max-steps=0\n").size() == 1);

  // While it runs: a series RLC switched onto a DC source rings at f0 = 1 / (2 pi sqrt(L C))
  // (any circuit-theory text), about 5.03 kHz here, decaying over 2 L / R = 0.2 s. The run
  // spends its 3000 steps inside the ringing and names the ringing node with that frequency;
  // the count of turning points over the last window is within one period of the window's
  // length (about 15 periods): 10 %.
  Netlist rlc = parseNetlist(
      "voltage V1 a gnd dc=10V\nresistor R1 a b 0.01\ninductor L1 b c 1mH\n"
      "capacitor C1 c gnd 1uF\nrun transient stop=1s max-steps=3000\n",
      "rlc.disc");
  auto o = rlc.analyses.back().transient;
  o.tol.reltol = 1e-5;
  o.record = {"v:c"};
  try {
    transient(rlc.circuit, o);
    FAIL("the run finished within its budget");
  } catch (const TimeStepError& err) {
    const std::string m = err.what();
    INFO(m);
    CHECK_THAT(m, Contains("budget of 3000 steps") && Contains("oscillates at about"));
    CHECK(err.time() < 0.2);
    const auto at = m.find("oscillates at about ") + 20;
    const double f = std::stod(m.substr(at));
    CHECK(f == Approx(1.0 / (2 * 3.14159265358979 * std::sqrt(1e-3 * 1e-6))).epsilon(0.1));
  }
}

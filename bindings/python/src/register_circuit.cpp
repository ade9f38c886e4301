// Circuits (netlists) built from files, text or code; runs copy the netlist under the GIL and
// release it.
#include <pybind11/stl.h>
#include <optional>

#include <chrono>
#include <memory>

#include "disc/analysis.hpp"
#include "disc/analysis_settings.hpp"
#include "disc/error.hpp"
#include "disc/netlist.hpp"
#include "disc/reference_circuits.hpp"
#include "disc/session.hpp"
#include "disc/supply_report.hpp"
#include "disc/trace.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

namespace {

/// The engine's progress callback for a run with the GIL released. Taking the GIL at every
/// step would stall the run behind any busy Python thread, so it is taken at most every 0.1 s
/// of wall time after the first step (so a short run still reports once): to let Python deliver
/// Ctrl-C, and to call `callback(time, stop)` when one is given (a false return cancels the run).
/// The caller keeps `callback` alive during the run.
std::function<bool(double, double)> throttledProgress(py::handle callback) {
  using Clock = std::chrono::steady_clock;
  static constexpr auto kInterval = std::chrono::milliseconds(100);
  auto next = std::make_shared<Clock::time_point>(Clock::now());
  return [callback, next](double time, double stop) {
    const auto now = Clock::now();
    if (now < *next) return true;
    *next = now + kInterval;
    py::gil_scoped_acquire gil;
    if (PyErr_CheckSignals() != 0) {
      PyErr_Clear();
      return false;
    }
    if (!callback.is_none()) {
      py::object keepGoing = callback(time, stop);
      if (!keepGoing.is_none() && !keepGoing.cast<bool>()) return false;
    }
    return true;
  };
}

std::shared_ptr<Result> own(Result&& r) {
  return std::make_shared<Result>(std::move(r));
}

py::object diagnosticList(const NetlistError& e) {
  py::list out;
  for (const auto& d : e.diagnostics())
    out.append(py::make_tuple(d.where.file, d.where.line, d.where.column, d.message));
  return std::move(out);
}

}  // namespace

void registerErrors(py::module_& m) {
  // The Python classes live in disc/_errors.py; C++ exceptions become instances of them.
  py::register_exception_translator([](std::exception_ptr p) {
    if (!p) return;
    try {
      std::rethrow_exception(p);
    } catch (const NetlistError& e) {
      py::object cls = py::module_::import("disc._errors").attr("NetlistError");
      py::object err = cls(e.what(), diagnosticList(e));
      PyErr_SetObject(cls.ptr(), err.ptr());
    } catch (const TraceError& e) {
      py::object cls = py::module_::import("disc._errors").attr("TraceError");
      py::object err = cls(e.what(), e.file(), e.line(), e.column(), e.columnName());
      PyErr_SetObject(cls.ptr(), err.ptr());
    } catch (const CallbackFailed& e) {
      e.restore();
    } catch (const Cancelled& e) {
      PyErr_SetString(PyExc_KeyboardInterrupt, e.what());
    } catch (const InputError& e) {
      // disc.InputError is a ValueError too.
      py::object cls = py::module_::import("disc._errors").attr("InputError");
      PyErr_SetObject(cls.ptr(), py::str(e.what()).ptr());
    } catch (const Error& e) {
      py::object cls = py::module_::import("disc._errors").attr("SimulationError");
      PyErr_SetObject(cls.ptr(), py::str(e.what()).ptr());
    }
  });
  (void)m;
}

void registerCircuit(py::module_& m) {
  py::class_<Netlist>(m, "Netlist", "A circuit with its analyses, output and plate types.")
      .def(py::init([](const std::string& name) { return emptyNetlist(name); }),
           py::arg("name") = "<python>")
      .def(
          "clone", [](const Netlist& n) { return Netlist(n); }, "A deep copy (cheap: no parsing).")
      .def_readwrite("title", &Netlist::title)
      .def_readonly("path", &Netlist::path)
      .def_property_readonly("ambient", [](const Netlist& n) { return n.circuit.ambient(); })
      .def("add", &addElement, py::arg("kind"), py::arg("name"), py::arg("nodes"),
           py::arg("params"))
      .def("statement",
           [](Netlist& n, const std::string& text) { appendNetlist(n, text, "<python>"); })
      .def("check", &checkNetlist)
      .def(
          "add_plate_type", [](Netlist& n, const PlateType& t) { n.plateTypes.add(t); },
          "Makes a plate type (a fitted one, say) known to the netlist's stack statements.")
      .def("element_names",
           [](const Netlist& n) {
             std::vector<std::string> names;
             for (const auto& d : n.circuit.devices()) names.push_back(d->name());
             return names;
           })
      .def("element_kind",
           [](Netlist& n, const std::string& e) { return std::string(n.circuit.at(e).kind()); })
      .def("parameter_names",
           [](Netlist& n, const std::string& e) { return n.circuit.at(e).parameterNames(); })
      .def("parameter", [](Netlist& n, const std::string& e,
                           const std::string& p) { return n.circuit.at(e).parameter(p); })
      .def("set_parameter", [](Netlist& n, const std::string& e, const std::string& p,
                               double v) { n.circuit.at(e).setParameter(p, v); })
      .def("probes", [](Netlist& n, const std::string& e) { return n.circuit.at(e).probes(); })
      .def("nodes",
           [](const Netlist& n) {
             std::vector<std::string> names;
             for (int k = 0; k < n.circuit.nodeCount(); ++k) names.push_back(n.circuit.nodeName(k));
             return names;
           })
      .def_property_readonly("has_output", [](const Netlist& n) { return n.output.given; })
      .def(
          "run_transient",
          [](const Netlist& n, double stop, const std::vector<std::string>& record,
             const std::string& method, const std::string& start, double maxStep, double reltol,
             double abstol, double temperatureAbstol, py::object progress, double recordFrom,
             double recordSpacing, const std::string& csvPath, double maxSteps) {
            checkNetlist(n);
            TransientOptions o;
            o.stop = stop;
            // 0 keeps the default; any other value is checked as the netlist checks it.
            if (maxSteps != 0.0) o.maxSteps = stepBudget(maxSteps);
            o.recordFrom = recordFrom;
            o.recordSpacing = recordSpacing;
            o.method = parseMethod(method);
            if (start == "cold")
              o.start = Start::Cold;
            else if (start == "operating-point")
              o.start = Start::OperatingPoint;
            else
              throw InputError("start is 'cold' or 'operating-point', got '" + start + "'");
            o.maxStep = maxStep;
            if (reltol != 0.0) o.tol.reltol = checkSetting("reltol", reltol);
            if (abstol != 0.0) o.tol.voltage = o.tol.current = checkSetting("abstol", abstol);
            if (temperatureAbstol != 0.0)
              o.tol.temperature = checkSetting("temperature-abstol", temperatureAbstol);
            o.record = runSignals(n, record);
            o.progress = throttledProgress(progress);
            // The copy is taken under the GIL, so no Python thread changes the netlist while it
            // is read; the run then touches only the copy.
            const Circuit circuit = n.circuit;
            // With a CSV path the rows go to the file as the run goes; the Result keeps what
            // the supply report reads (bounded memory on any stop time).
            std::optional<CsvFile> csv;
            if (!csvPath.empty()) {
              csv.emplace(csvPath);
              o.sink = &*csv;
              o.keepLast = reportSpan(n, o);
            }
            py::gil_scoped_release nogil;
            return own(transient(circuit, o));
          },
          py::arg("stop"), py::arg("record"), py::arg("method"), py::arg("start"),
          py::arg("max_step"), py::arg("reltol"), py::arg("abstol"),
          py::arg("temperature_abstol") = 0.0, py::arg("progress") = py::none(),
          py::arg("record_from") = 0.0, py::arg("record_spacing") = 0.0, py::arg("csv") = "",
          py::arg("max_steps") = 0.0)
      .def(
          "run_periodic",
          [](const Netlist& n, const std::vector<std::string>& record, double reltol, double at) {
            checkNetlist(n);
            PeriodicOptions o;
            if (reltol != 0.0) o.tol.reltol = checkSetting("reltol", reltol);
            o.slowTime = at;
            o.record = runSignals(n, record);
            const Circuit circuit = n.circuit;  // copied under the GIL, run without it
            py::gil_scoped_release nogil;
            return own(periodicSteadyState(circuit, o).waveforms);
          },
          py::arg("record"), py::arg("reltol"), py::arg("at"))
      .def(
          "run_warm_up",
          [](const Netlist& n, double duration, const std::vector<std::string>& record,
             double reltol, py::object progress) {
            checkNetlist(n);
            EnvelopeOptions o;
            o.duration = duration;
            if (reltol != 0.0) o.reltol = checkSetting("reltol", reltol);
            o.record = record;
            o.progress = throttledProgress(progress);
            const Circuit circuit = n.circuit;  // copied under the GIL, run without it
            EnvelopeResult er;
            {
              py::gil_scoped_release nogil;
              er = warmUp(circuit, o);
            }
            std::vector<std::string> failures;
            for (const auto& e : er.failures) failures.push_back(e.verdict());
            return py::make_tuple(own(std::move(er.series)), er.stoppedBy, failures);
          },
          py::arg("duration"), py::arg("record"), py::arg("reltol"),
          py::arg("progress") = py::none())
      .def(
          "warm_up",
          [](const Netlist& n, double duration, const std::vector<std::string>& record,
             double reltol, py::object progress) {
            checkNetlist(n);
            EnvelopeOptions o;
            o.duration = duration;
            if (reltol != 0.0) o.reltol = checkSetting("reltol", reltol);
            o.record = record;
            o.progress = throttledProgress(progress);
            const Netlist copy = n;  // copied under the GIL, run without it
            AnalysisOutcome ao;
            SupplyReport report;
            {
              py::gil_scoped_release nogil;
              ao = warmUpAnalysis(copy, o, &report);
            }
            const WarmUpSummary& w = ao.warmUp;
            py::dict d;
            d["duration_s"] = w.duration;
            d["end_time_s"] = w.endTime;
            d["stopped_by"] = w.stoppedBy;
            py::list limits;
            for (const auto& c : w.firstLimits) {
              py::dict x;
              x["what"] = c.what;
              x["time_s"] = c.time;
              x["limit"] = c.limit;
              x["unit"] = c.unit;
              limits.append(x);
            }
            d["first_limits"] = limits;
            py::list trends;
            for (const auto& t : w.trends) {
              py::dict x;
              x["what"] = t.what;
              x["unit"] = t.unit;
              x["start"] = t.start;
              x["end"] = t.end;
              trends.append(x);
            }
            d["trends"] = trends;
            py::dict stats;
            stats["slow_steps"] = w.stats.slowSteps;
            stats["rejected_slow_steps"] = w.stats.rejectedSlowSteps;
            stats["interpolated_rows"] = w.stats.interpolatedRows;
            stats["periodic_solves"] = w.stats.periodicSolves;
            stats["shooting_iterations"] = w.stats.shootingIterations;
            stats["period_integrations"] = w.stats.periodIntegrations;
            stats["wall_s"] = w.stats.wallSeconds;
            d["stats"] = stats;
            d["text"] = warmUpText(w);
            return py::make_tuple(
                own(std::move(ao.result)), d,
                n.output.given ? py::object(py::str(reportJson(report))) : py::object(py::none()));
          },
          py::arg("duration"), py::arg("record"), py::arg("reltol"),
          py::arg("progress") = py::none(),
          "A warm-up as `run warm-up` makes it: (series, summary dict, report JSON or None).")
      .def(
          "run_operating_point",
          [](const Netlist& n, const std::vector<std::string>& record) {
            checkNetlist(n);
            OperatingPointOptions o;
            o.record = record;
            const Circuit circuit = n.circuit;  // copied under the GIL, run without it
            py::gil_scoped_release nogil;
            return own(operatingPoint(circuit, o));
          },
          py::arg("record"))
      .def(
          "run",
          [](const Netlist& n, py::object progress) {
            const Netlist copy = n;  // copied under the GIL, run without it
            RunOutcome out;
            {
              py::gil_scoped_release nogil;
              out = runNetlist(copy, throttledProgress(progress));
            }
            py::list results;
            for (auto& a : out.analyses) results.append(own(std::move(a.result)));
            return py::make_tuple(
                results, out.hasReport ? py::object(py::str(reportJson(out.report))) : py::none());
          },
          py::arg("progress") = py::none(),
          "Runs the netlist's own analyses: (results, report JSON or None).")
      .def("report_json",
           [](const Netlist& n, const Result& r) {
             if (!n.output.given)
               throw InputError(
                   "the circuit has no output statement: name the output and its load first");
             return reportJson(makeSupplyReport(n, r));
           })
      .def("report_text",
           [](const Netlist& n, const Result& r) { return reportText(makeSupplyReport(n, r)); })
      .def("write_files", [](const Netlist& n, const std::string& dir) {
        // Refused before the run, not after it; the transients stream their CSV into it.
        StagedFolder folder(dir);
        const Netlist copy = n;  // copied under the GIL, run without it
        RunOutcome out;
        {
          py::gil_scoped_release nogil;
          out = runNetlist(copy, throttledProgress(py::none()), &folder);
        }
        return writeRunFiles(copy, out, folder);
      });
  m.def(
      "reference_circuit",
      [](const std::string& name) {
        Netlist n = emptyNetlist("<reference " + name + ">");
        n.circuit = reference::build(name);
        return n;
      },
      py::arg("name"), "A reference circuit built in code (see `disc example list`).");
  auto policy = [](bool sandbox) {
    return sandbox ? IncludePolicy::Confined : IncludePolicy::Trusted;
  };
  m.def(
      "load",
      [policy](const std::string& path, bool sandbox) {
        return loadNetlist(path, policy(sandbox));
      },
      py::arg("path"), py::arg("sandbox") = false,
      "Reads and checks a .disc netlist file; sandbox confines include and use to its folder.");
  m.def(
      "parse",
      [policy](const std::string& text, const std::string& name, bool sandbox) {
        return parseNetlist(text, name, policy(sandbox));
      },
      py::arg("text"), py::arg("name") = "<text>", py::arg("sandbox") = false,
      "Parses netlist text; sandbox confines include and use to the folder of `name`.");
}

}  // namespace disc::python

// Results as numpy arrays that view the C++ columns (no copy, read-only).
#include <pybind11/numpy.h>
#include <pybind11/stl.h>

#include <memory>

#include "disc/error.hpp"
#include "disc/result.hpp"
#include "disc/session.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

namespace {

py::array view(const std::shared_ptr<Result>& owner, const std::vector<double>& column) {
  // The array's base is the Result itself, which keeps the buffer alive.
  py::array a(py::dtype::of<double>(), {column.size()}, {sizeof(double)}, column.data(),
              py::cast(owner));
  py::detail::array_proxy(a.ptr())->flags &= ~py::detail::npy_api::NPY_ARRAY_WRITEABLE_;
  return a;
}

}  // namespace

void registerResult(py::module_& m) {
  py::class_<Result, std::shared_ptr<Result>>(m, "Result", "Time points and recorded signals.")
      .def_property_readonly(
          "time", [](const std::shared_ptr<Result>& r) { return view(r, r->time()); },
          "Time points, s (read-only view, no copy).")
      .def(
          "__getitem__",
          [](const std::shared_ptr<Result>& r, const std::string& name) {
            return view(r, (*r)[name]);
          },
          "A recorded signal by name (read-only view, no copy).")
      .def("__contains__", &Result::has)
      .def_property_readonly("signals", &Result::signals)
      .def("unit", &Result::unit, "Unit symbol of a signal.")
      .def_property_readonly("recorded_rows", &Result::recordedRows,
                             "Rows the run recorded, kept or not.")
      .def_property_readonly("stats",
                             [](const Result& r) {
                               const RunStats& s = r.stats();
                               py::dict d;
                               d["method"] = s.method;
                               d["accepted_steps"] = s.acceptedSteps;
                               d["rejected_steps"] = s.rejectedSteps;
                               d["newton_iterations"] = s.newtonIterations;
                               d["factorizations"] = s.factorizations;
                               d["unknowns"] = s.unknowns;
                               d["wall_s"] = s.wallSeconds;
                               return d;
                             })
      .def_property_readonly(
          "failures",
          [](const Result& r) {
            py::list l;
            for (const FailureEvent& e : r.failures()) {
              py::dict d;
              d["kind"] = thermalConditionName(e.kind);
              d["body"] = e.body;
              d["device"] = e.device;
              d["plates"] = e.plates;
              d["time_s"] = e.time;
              d["temperature_K"] = e.temperature;
              d["destruction_K"] = e.destruction;
              d["fails_to"] = failureModeName(e.mode);
              d["mechanism"] = e.mechanism;
              d["cause"] = e.cause;
              d["verdict"] = e.verdict();
              l.append(d);
            }
            return l;
          },
          "Runaways and destructions, in order of time (the keys of report.json's failures).")
      .def_property_readonly("failed", &Result::failed,
                             "True when a plate was destroyed (the run ended there).")
      .def(
          "to_csv",
          [](const Result& r, const std::string& path) { writeFileAtomically(path, resultCsv(r)); },
          "Writes every signal as CSV (header 'name [unit]').");
  m.def(
      "write_files",
      [](const std::string& dir, const std::vector<std::pair<std::string, py::bytes>>& files) {
        std::vector<std::pair<std::string, std::string>> f;
        for (const auto& [name, content] : files) f.emplace_back(name, std::string(content));
        return writeFiles(dir, f);
      },
      py::arg("folder"), py::arg("files"),
      "Writes (name, bytes) files as the whole of a folder, swapped into place (disc/files.hpp).");
}

}  // namespace disc::python

// The power-up planner: the plan's fields as read-only attributes, its text and JSON.
#include <pybind11/stl.h>

#include <optional>

#include "disc/error.hpp"
#include "disc/power_up.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

std::function<bool(const std::string&)> lineProgress(py::handle callback) {
  return [callback](const std::string& line) {
    py::gil_scoped_acquire gil;
    if (PyErr_CheckSignals() != 0) {
      PyErr_Clear();
      return false;
    }
    if (callback.is_none()) return true;
    try {
      py::object keepGoing = callback(line);
      return keepGoing.is_none() || static_cast<bool>(py::bool_(keepGoing));
    } catch (py::error_already_set& e) {
      throw CallbackFailed(std::make_shared<py::error_already_set>(std::move(e)));
    }
  };
}

void registerPowerUp(py::module_& m) {
  py::class_<PowerUpStep>(m, "PowerUpStep", "One step of a power-up schedule (SI units, K).")
      .def_readonly("level", &PowerUpStep::level)
      .def_readonly("fraction", &PowerUpStep::fraction)
      .def_readonly("start", &PowerUpStep::start)
      .def_readonly("duration", &PowerUpStep::duration)
      .def_readonly("leakage_start", &PowerUpStep::leakageStart)
      .def_readonly("leakage_end", &PowerUpStep::leakageEnd)
      .def_readonly("hottest", &PowerUpStep::hottest)
      .def_readonly("reverse_per_plate", &PowerUpStep::reversePerPlate)
      .def_readonly("capacitor_voltage", &PowerUpStep::capacitorVoltage)
      .def_readonly("forming_end", &PowerUpStep::formingEnd)
      .def_readonly("settled", &PowerUpStep::settled);
  py::class_<PowerUpPlan>(m, "PowerUpPlanData", "A power-up plan as the library makes it.")
      .def_readonly("steps", &PowerUpPlan::steps)
      .def_readonly("envelope_runs", &PowerUpPlan::envelopeRuns)
      .def("text", &powerUpText)
      .def("json", &powerUpJson);
  m.def(
      "plan_power_up",
      [](const Netlist& n, const std::string& stack, const std::string& source,
         std::optional<double> margin, std::optional<double> firstLevel,
         std::optional<double> smallestStep, std::optional<double> turn,
         std::optional<double> minHold, std::optional<double> maxHold,
         std::optional<double> settleLeakage, std::optional<double> settleTemperature,
         std::optional<double> maxTotal, std::optional<int> maxSteps,
         std::optional<double> maxSlowStep, py::object progress) {
        PowerUpOptions o;  // the library's defaults, for every option not given
        o.stack = stack;
        o.source = source;
        o.margin = margin.value_or(o.margin);
        o.firstLevel = firstLevel.value_or(o.firstLevel);
        o.smallestStep = smallestStep.value_or(o.smallestStep);
        o.turn = turn.value_or(o.turn);
        o.minHold = minHold.value_or(o.minHold);
        o.maxHold = maxHold.value_or(o.maxHold);
        o.settleLeakage = settleLeakage.value_or(o.settleLeakage);
        o.settleTemperature = settleTemperature.value_or(o.settleTemperature);
        o.maxTotal = maxTotal.value_or(o.maxTotal);
        o.maxSteps = maxSteps.value_or(o.maxSteps);
        o.maxSlowStep = maxSlowStep.value_or(o.maxSlowStep);
        o.progress = lineProgress(progress);  // called once per envelope run
        checkNetlist(n);
        const Netlist copy = n;  // copied under the GIL, planned without it
        py::gil_scoped_release nogil;
        return planPowerUp(copy, o);
      },
      py::arg("netlist"), py::arg("stack"), py::arg("source") = "", py::arg("margin") = py::none(),
      py::arg("first_level") = py::none(), py::arg("smallest_step") = py::none(),
      py::arg("turn") = py::none(), py::arg("min_hold") = py::none(),
      py::arg("max_hold") = py::none(), py::arg("settle_leakage") = py::none(),
      py::arg("settle_temperature") = py::none(), py::arg("max_total") = py::none(),
      py::arg("max_steps") = py::none(), py::arg("max_slow_step") = py::none(),
      py::arg("progress") = py::none());
}

}  // namespace disc::python

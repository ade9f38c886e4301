// Measured traces, the static plate curve, the plate fit and the health verdict.
#include <pybind11/numpy.h>
#include <pybind11/stl.h>

#include <optional>

#include "disc/plate_curve.hpp"
#include "disc/plate_fit.hpp"
#include "disc/plate_health.hpp"
#include "disc/trace.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

namespace {

py::array_t<double> array(const std::vector<double>& v) {
  return py::array_t<double>(v.size(), v.data());
}

}  // namespace

void registerFit(py::module_& m) {
  py::class_<Trace>(m, "Trace", "A measured I-V trace in SI units (copies as numpy arrays).")
      .def(py::init(&traceFromColumns), py::arg("voltage"), py::arg("current"),
           py::arg("time") = std::vector<double>{}, py::arg("temperature") = std::vector<double>{},
           py::arg("source") = "<arrays>")
      .def_readonly("source", &Trace::source)
      .def_property_readonly("voltage", [](const Trace& t) { return array(t.voltage); })
      .def_property_readonly("current", [](const Trace& t) { return array(t.current); })
      .def_property_readonly("time", [](const Trace& t) { return array(t.time); })
      .def_property_readonly("temperature", [](const Trace& t) { return array(t.temperature); })
      .def_property_readonly("lines", [](const Trace& t) { return t.lines; })
      .def_property_readonly("dynamic", &Trace::dynamic)
      .def("__len__", &Trace::size);
  m.def("load_trace", &loadTrace, py::arg("path"));
  m.def("parse_trace", &parseTrace, py::arg("text"), py::arg("name") = "<trace>");

  py::class_<PlateCurve>(m, "PlateCurve", "Static I-V curve of one plate (no self-heating).")
      .def(py::init<const PlateType&, double>(), py::arg("type"), py::arg("forming") = 1.0)
      .def("current", py::vectorize(&PlateCurve::current), py::arg("volts"), py::arg("kelvin"))
      .def("voltage", py::vectorize(&PlateCurve::voltage), py::arg("amps"), py::arg("kelvin"));
  m.def(
      "model_current",
      [](const PlateType& type, const Trace& trace, int plates, double kelvin) {
        std::vector<double> i;
        {
          py::gil_scoped_release nogil;
          i = modelCurrent(type, trace, plates, kelvin);
        }
        return array(i);
      },
      py::arg("type"), py::arg("trace"), py::arg("plates") = 1, py::arg("kelvin") = 298.15);

  py::class_<PlateHealth>(m, "PlateHealth", "A plate judged against a healthy one.")
      .def_readonly("reference", &PlateHealth::reference)
      .def_readonly("temperature", &PlateHealth::temperature)
      .def_readonly("rated_current", &PlateHealth::ratedCurrent)
      .def_readonly("forward_drop", &PlateHealth::forwardDrop)
      .def_readonly("forward_drop_healthy", &PlateHealth::forwardDropHealthy)
      .def_readonly("reverse_voltage", &PlateHealth::reverseVoltage)
      .def_readonly("reverse_current", &PlateHealth::reverseCurrent)
      .def_readonly("reverse_current_healthy", &PlateHealth::reverseCurrentHealthy)
      .def_readonly("forward_ratio", &PlateHealth::forwardRatio)
      .def_readonly("reverse_ratio", &PlateHealth::reverseRatio)
      .def_readonly("forming_estimate", &PlateHealth::formingEstimate)
      .def_readonly("level", &PlateHealth::level)
      .def_readonly("findings", &PlateHealth::findings);
  m.def("judge_plate_health", &judgePlateHealth, py::arg("plate"), py::arg("healthy"),
        py::arg("kelvin") = 298.15);

  py::class_<FittedParameter>(m, "FittedParameter", "One fitted parameter with its uncertainty.")
      .def_readonly("name", &FittedParameter::name)
      .def_readonly("unit", &FittedParameter::unit)
      .def_readonly("stage", &FittedParameter::stage)
      .def_readonly("value", &FittedParameter::value)
      .def_readonly("start", &FittedParameter::start)
      .def_readonly("uncertainty", &FittedParameter::uncertainty)
      .def_readonly("low", &FittedParameter::low)
      .def_readonly("high", &FittedParameter::high)
      .def_readonly("interval", &FittedParameter::interval)
      .def_readonly("log_scale", &FittedParameter::logScale)
      .def_readonly("at_bound", &FittedParameter::atBound)
      .def_readonly("identifiable", &FittedParameter::identifiable)
      .def_property_readonly("expanded", &FittedParameter::expanded)
      .def("covers", &FittedParameter::covers);
  py::class_<FitCurve>(m, "FitCurve", "Measured and fitted current of one trace, per plate.")
      .def_readonly("trace", &FitCurve::trace)
      .def_readonly("dynamic", &FitCurve::dynamic)
      .def_property_readonly("time", [](const FitCurve& c) { return array(c.time); })
      .def_property_readonly("voltage", [](const FitCurve& c) { return array(c.voltage); })
      .def_property_readonly("measured", [](const FitCurve& c) { return array(c.measured); })
      .def_property_readonly("fitted", [](const FitCurve& c) { return array(c.fitted); });
  py::class_<PlateFit>(m, "PlateFit", "A fitted plate type with its report.")
      .def_readonly("type", &PlateFit::type)
      .def_readonly("parameters", &PlateFit::parameters)
      .def_readonly("points", &PlateFit::points)
      .def_readonly("rms_weighted", &PlateFit::rmsWeighted)
      .def_readonly("rms_current", &PlateFit::rmsCurrent)
      .def_readonly("stages", &PlateFit::stages)
      .def_readonly("binning", &PlateFit::binning)
      .def_readonly("warnings", &PlateFit::warnings)
      .def_readonly("health", &PlateFit::health)
      .def_readonly("curves", &PlateFit::curves)
      .def_readonly("evaluations", &PlateFit::evaluations)
      .def("report_text", &fitReportText)
      .def("report_json", &fitReportJson)
      .def("plots", &fitPlots)
      .def("write", &writeFitFiles, py::arg("dir"));
  m.def(
      "fit_plate",
      [](const std::vector<Trace>& traces, int plates, const std::string& like,
         std::optional<PlateType> reference, const std::vector<std::string>& fixed,
         const std::string& material, double area, const std::string& name, double kelvin,
         double noiseRelative, double noiseFloor, bool dynamic, std::optional<std::size_t> binAbove,
         std::optional<std::size_t> binsPerDirection, py::object progress) {
        FitOptions o;
        o.reference = std::move(reference);
        o.fixed = fixed;
        o.plates = plates;
        o.like = like;
        o.material = material;
        o.areaCm2 = area;
        o.name = name;
        o.temperature = kelvin;
        o.noiseRelative = noiseRelative;
        o.noiseFloor = noiseFloor;
        o.dynamic = dynamic;
        o.binAbove = binAbove.value_or(o.binAbove);
        o.binsPerDirection = binsPerDirection.value_or(o.binsPerDirection);
        o.progress = lineProgress(progress);  // about every 0.2 s, from the released GIL
        py::gil_scoped_release nogil;
        return fitPlate(traces, o);
      },
      py::arg("traces"), py::arg("plates"), py::arg("like"), py::arg("reference"), py::arg("fixed"),
      py::arg("material"), py::arg("area_cm2"), py::arg("name"), py::arg("kelvin"),
      py::arg("noise_relative"), py::arg("noise_floor"), py::arg("dynamic"),
      py::arg("bin_above") = py::none(), py::arg("bins_per_direction") = py::none(),
      py::arg("progress") = py::none());
}

}  // namespace disc::python

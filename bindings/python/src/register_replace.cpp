// Silicon replacement design.
#include <pybind11/stl.h>

#include "disc/replacement.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

void registerReplace(py::module_& m) {
  py::class_<ReplacementRow>(m, "ReplacementRow", "Original against replacement at one load.")
      .def_readonly("load_fraction", &ReplacementRow::loadFraction)
      .def_readonly("output_original", &ReplacementRow::outputOriginal)
      .def_readonly("output_replacement", &ReplacementRow::outputReplacement)
      .def_readonly("current_original", &ReplacementRow::currentOriginal)
      .def_readonly("current_replacement", &ReplacementRow::currentReplacement)
      .def_readonly("ripple_original", &ReplacementRow::rippleOriginal)
      .def_readonly("ripple_replacement", &ReplacementRow::rippleReplacement)
      .def_readonly("surge_original", &ReplacementRow::surgeOriginal)
      .def_readonly("surge_replacement", &ReplacementRow::surgeReplacement)
      .def_readonly("dissipation_original", &ReplacementRow::dissipationOriginal)
      .def_readonly("dissipation_replacement", &ReplacementRow::dissipationReplacement);
  py::class_<ReplacementDesign>(m, "ReplacementDesign", "A silicon replacement for plate stacks.")
      .def_readonly("file", &ReplacementDesign::file)
      .def_readonly("stacks", &ReplacementDesign::stacks)
      .def_readonly("load", &ReplacementDesign::loadName)
      .def_readonly("quantity", &ReplacementDesign::quantity)
      .def_readonly("unit", &ReplacementDesign::unit)
      .def_readonly("target", &ReplacementDesign::target)
      .def_readonly("target_kind", &ReplacementDesign::targetKind)
      .def_readonly("present", &ReplacementDesign::present)
      .def_readonly("diode_current", &ReplacementDesign::diodeCurrent)
      .def_property_readonly("verdicts",
                             [](const ReplacementDesign& d) {
                               py::list l;
                               for (const auto& v : d.verdicts) {
                                 py::dict x;
                                 x["figure"] = v.figure;
                                 x["value"] = v.value;
                                 x["limit"] = v.limit;
                                 x["unit"] = v.unit;
                                 x["level"] = v.level;
                                 x["rule"] = v.rule;
                                 l.append(x);
                               }
                               return l;
                             })
      .def_readonly("silicon_alone", &ReplacementDesign::siliconAlone)
      .def_readonly("resistor_exact", &ReplacementDesign::resistorExact)
      .def_readonly("output_exact", &ReplacementDesign::outputExact)
      .def_readonly("hand_estimate", &ReplacementDesign::handEstimate)
      .def_readonly("e12", &ReplacementDesign::e12)
      .def_readonly("e24", &ReplacementDesign::e24)
      .def_readonly("output_e12", &ReplacementDesign::outputE12)
      .def_readonly("output_e24", &ReplacementDesign::outputE24)
      .def_readonly("resistor_power", &ReplacementDesign::resistorPower)
      .def_readonly("resistor_rating", &ReplacementDesign::resistorRating)
      .def_readonly("peak_reverse", &ReplacementDesign::peakReverse)
      .def_readonly("piv_required", &ReplacementDesign::pivRequired)
      .def_readonly("surge_simulated", &ReplacementDesign::surgeSimulated)
      .def_readonly("surge_required", &ReplacementDesign::surgeRequired)
      .def_readonly("rows", &ReplacementDesign::rows)
      .def_readonly("netlist", &ReplacementDesign::netlist)
      .def_readonly("warnings", &ReplacementDesign::warnings)
      .def_readonly("cautions", &ReplacementDesign::cautions)
      .def_readonly("runs", &ReplacementDesign::runs)
      .def("text", &replacementText)
      .def("json", &replacementJson);
  m.def(
      "design_replacement",
      [](const std::string& path, const std::vector<std::string>& stacks, const std::string& diode,
         const std::vector<double>& loads, const std::string& target) {
        ReplaceOptions o;
        o.target = target;
        o.stacks = stacks;
        o.diode = diode;
        o.loadFractions = loads;
        o.progress = [](const std::string&) {
          py::gil_scoped_acquire gil;
          if (PyErr_CheckSignals() != 0) {
            PyErr_Clear();
            return false;
          }
          return true;
        };
        py::gil_scoped_release nogil;
        return designReplacementFile(path, o);
      },
      py::arg("path"), py::arg("stacks"), py::arg("diode"), py::arg("loads"),
      py::arg("target") = "formed");
}

}  // namespace disc::python

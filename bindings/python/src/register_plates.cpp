// Plate types: read, derive and save in the library's JSON schema.
#include <pybind11/stl.h>

#include "disc/plate_type.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

void registerPlates(py::module_& m) {
  py::class_<PlateType>(m, "PlateType",
                        "A plate type (parameters, ratings, thermal and history data).")
      .def_readonly("name", &PlateType::name)
      .def_readonly("material", &PlateType::material)
      .def_readonly("description", &PlateType::description)
      .def_readonly("notes", &PlateType::notes)
      .def_property_readonly(
          "fails_to", [](const PlateType& t) { return failureModeName(t.failure.mode); },
          "What a destroyed plate becomes: 'short' or 'open'.")
      .def_property_readonly(
          "mechanism", [](const PlateType& t) { return t.failure.mechanism; },
          "What destroys the plate at failure.destruction_temp_C, in words.")
      .def("get", &PlateType::get, py::arg("key"), "A parameter by its JSON name.")
      .def("set", &PlateType::set, py::arg("key"), py::arg("value"))
      .def_static("parameter_names", &PlateType::parameterNames)
      .def("rated_current", &PlateType::ratedCurrent, "Rated average current of one plate, A.")
      .def("to_json", [](const PlateType& t) { return PlateLibrary::toJson(t); })
      .def("save", [](const PlateType& t, const std::string& path) { PlateLibrary::save(t, path); })
      .def(
          "derive",
          [](const PlateType& t, const std::string& name,
             const std::map<std::string, double>& changes) {
            return PlateLibrary::derive(t, name, changes);
          },
          py::arg("name"), py::arg("changes"));
  m.def("builtin_plate_types", []() { return PlateLibrary::builtIn().types(); });
  m.def("load_plate_types",
        [](const std::string& path) { return PlateLibrary::load(path).types(); });
}

}  // namespace disc::python

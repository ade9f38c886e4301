// The _disc extension: only wires the register functions of each concept.
#include <pybind11/pybind11.h>

#include "disc/version.hpp"
#include "register.hpp"

PYBIND11_MODULE(_disc, m) {
  m.doc() = "libdisc: plate-rectifier supply simulation (C++ core)";
  m.attr("__version__") = disc::kVersion;
  disc::python::registerErrors(m);
  disc::python::registerPlates(m);
  disc::python::registerResult(m);
  disc::python::registerCircuit(m);
  disc::python::registerFit(m);
  disc::python::registerReplace(m);
  disc::python::registerPowerUp(m);
  disc::python::registerCampaign(m);
}

// Registration functions of the _disc extension, one per concept.
#pragma once

#include <pybind11/pybind11.h>

namespace disc::python {

void registerErrors(pybind11::module_& m);
void registerPlates(pybind11::module_& m);
void registerResult(pybind11::module_& m);
void registerCircuit(pybind11::module_& m);
void registerFit(pybind11::module_& m);
void registerReplace(pybind11::module_& m);
void registerPowerUp(pybind11::module_& m);
void registerCampaign(pybind11::module_& m);

}  // namespace disc::python

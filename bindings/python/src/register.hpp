// Registration functions of the _disc extension, one per concept.
#pragma once

#include <pybind11/pybind11.h>

#include <functional>
#include <memory>
#include <string>

#include "disc/error.hpp"

namespace disc::python {

/// A Python callback raised: it stops the library's work as a cancellation (so no retry or
/// failed-step handling swallows it) and is raised again, as itself, at the binding boundary.
class CallbackFailed : public Cancelled {
 public:
  explicit CallbackFailed(std::shared_ptr<pybind11::error_already_set> error)
      : Cancelled("a Python callback raised"), error_(std::move(error)) {}
  void restore() const { error_->restore(); }

 private:
  std::shared_ptr<pybind11::error_already_set> error_;
};

/// A library progress callback that takes a line, for work running with the GIL released and
/// calling rarely (once per envelope run, every 0.2 s of a fit): takes the GIL for each call, to
/// let Python deliver Ctrl-C and to pass the line to `callback(line)` when one is given (a false
/// return cancels; an exception it raises stops the work and reaches the caller as itself,
/// through CallbackFailed). A handle: the caller keeps `callback` alive during the work.
std::function<bool(const std::string&)> lineProgress(pybind11::handle callback);

void registerErrors(pybind11::module_& m);
void registerPlates(pybind11::module_& m);
void registerResult(pybind11::module_& m);
void registerCircuit(pybind11::module_& m);
void registerFit(pybind11::module_& m);
void registerReplace(pybind11::module_& m);
void registerPowerUp(pybind11::module_& m);
void registerCampaign(pybind11::module_& m);

}  // namespace disc::python

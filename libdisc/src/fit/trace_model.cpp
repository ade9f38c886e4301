// The model's current along a measured trace: what the fit compares with the measurement.
#include <algorithm>
#include <numeric>

#include "disc/analysis.hpp"
#include "disc/devices/sources.hpp"
#include "disc/devices/stack.hpp"
#include "disc/plate_curve.hpp"
#include "disc/plate_fit.hpp"

namespace disc {

std::vector<double> modelCurrent(const PlateType& type, const Trace& trace, int plates,
                                 double kelvin, double reltol) {
  if (plates < 1) throw InputError("model current: the plate count must be at least 1");
  std::vector<double> out(trace.size());
  if (!trace.dynamic()) {
    const PlateCurve curve(type);
    for (std::size_t k = 0; k < trace.size(); ++k)
      out[k] = curve.current(trace.voltage[k] / plates,
                             trace.temperature.empty() ? kelvin : trace.temperature[k]);
    return out;
  }
  if (trace.size() < 2) throw InputError("model current: a timed trace needs two samples or more");
  const double t0 = trace.time.front();
  std::vector<std::pair<double, double>> drive(trace.size());
  for (std::size_t k = 0; k < trace.size(); ++k) drive[k] = {trace.time[k] - t0, trace.voltage[k]};
  Circuit c;
  const NodeId a = c.node("a");
  c.emplace<VoltageSource>("VTRACE", a, kGround, Waveform::points(std::move(drive)));
  StackOptions so;
  so.plates = plates;
  so.mode = plates > 1 ? StackMode::Lumped : StackMode::PerPlate;
  c.emplace<Stack>("PLATE", a, kGround, type, so);
  c.setAmbient(trace.temperature.empty()
                   ? kelvin
                   : std::accumulate(trace.temperature.begin(), trace.temperature.end(), 0.0) /
                         static_cast<double>(trace.temperature.size()));
  TransientOptions opt;
  opt.stop = trace.time.back() - t0;
  // From rest: charges empty, plate at ambient. An operating point at the first sample would
  // put the plate in thermal equilibrium with that voltage, which a sweep never reaches.
  opt.start = Start::Cold;
  opt.record = {"i:PLATE"};
  opt.tol.reltol = reltol;
  opt.tol.current = 1e-12;
  const Result r = transient(c, opt);
  const auto& t = r.time();
  const auto& i = r["i:PLATE"];
  // The samples are breakpoints of the drive, so each lies on a step; interpolate anyway. At a
  // corner of the drive the run records the left and the right limit (the capacitive current
  // jumps with the slope): a sample takes the left one, the current the sweep led to.
  std::size_t j = 0;
  const double atSample = 1e-12 * opt.stop;
  for (std::size_t k = 0; k < trace.size(); ++k) {
    const double tk = trace.time[k] - t0;
    while (j + 1 < t.size() && t[j + 1] < tk - atSample) ++j;
    if (j + 1 >= t.size()) {
      out[k] = i.back();
    } else {
      const double w = t[j + 1] > t[j] ? (tk - t[j]) / (t[j + 1] - t[j]) : 0.0;
      out[k] = i[j] + std::clamp(w, 0.0, 1.0) * (i[j + 1] - i[j]);
    }
  }
  return out;
}

}  // namespace disc

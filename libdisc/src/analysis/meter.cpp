#include "disc/meter.hpp"

#include <fmt/format.h>

#include "disc/error.hpp"
#include "disc/netlist.hpp"
#include "disc/periodic.hpp"
#include "disc/supply_report.hpp"

namespace disc {

namespace {

/// The meter's reading with the input source's parameter set to `value`, from a periodic
/// steady state (a meter settles in a few cycles of its own; the slow states stay as the
/// netlist starts them).
MeterPoint readingWith(const Netlist& nl, const std::string& source, const char* parameter,
                       double value) {
  Netlist copy = nl;
  copy.circuit.at(source).setParameter(parameter, value);
  PeriodicOptions o;
  o.record = reportSignals(copy);
  try {
    const SupplyReport rep = makeSupplyReport(copy, periodicSteadyState(copy.circuit, o).waveforms);
    return rep.meter->atInput;
  } catch (const ConvergenceError& e) {
    throw ConvergenceError(fmt::format("the meter's reading with {} {} = {:g}: {}", source,
                                       parameter, value, e.what()),
                           e.worstEquation(), e.residual());
  } catch (const TimeStepError& e) {
    throw TimeStepError(fmt::format("the meter's reading with {} {} = {:g}: {}", source, parameter,
                                    value, e.what()),
                        e.time(), e.worstUnknown());
  }
}

}  // namespace

void sweepMeter(const Netlist& nl, SupplyReport& report, const MeterSweepOptions& options) {
  if (!nl.output.meter() || !report.meter)
    throw InputError(
        "the output is not a meter: give the output full-scale= (the movement's current) and "
        "range= (the volts rms that full scale marks)");
  MeterFigures& m = *report.meter;
  if (m.source.empty())
    throw InputError(fmt::format(
        "the meter at {} has no sine voltage source as its input: add one, or name it with "
        "input= on the output",
        nl.output.load));
  m.levels.clear();
  m.frequencies.clear();
  for (double level : options.levels) {
    if (!(level > 0.0))
      throw InputError("a meter sweep's levels are fractions of the range above 0");
    m.levels.push_back(readingWith(nl, m.source, "rms", level * m.range));
  }
  for (double f : options.frequencies) {
    if (!(f > 0.0)) throw InputError("a meter sweep's frequencies are above 0 Hz");
    m.frequencies.push_back(readingWith(nl, m.source, "frequency", f));
  }
  judgeMeter(report, nl.output.load);
}

}  // namespace disc

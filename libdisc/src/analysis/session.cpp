// Running a netlist.
#include <algorithm>

#include "disc/session.hpp"

namespace disc {

std::vector<std::string> runSignals(const Netlist& nl, const std::vector<std::string>& extra) {
  std::vector<std::string> record = extra;
  auto add = [&record](const std::string& s) {
    if (std::find(record.begin(), record.end(), s) == record.end()) record.push_back(s);
  };
  for (const auto& s : nl.record) add(s);
  if (nl.output.given)
    for (const auto& s : reportSignals(nl)) add(s);
  return record;
}

RunOutcome runNetlist(const Netlist& nl, std::function<bool(double, double)> progress) {
  RunOutcome out;
  std::size_t lastTransient = nl.analyses.size();
  for (std::size_t k = 0; k < nl.analyses.size(); ++k)
    if (nl.analyses[k].kind == AnalysisRequest::Kind::Transient) lastTransient = k;
  for (std::size_t k = 0; k < nl.analyses.size(); ++k) {
    const AnalysisRequest& a = nl.analyses[k];
    const std::vector<std::string> record = runSignals(nl, {});
    if (a.kind == AnalysisRequest::Kind::OperatingPoint) {
      OperatingPointOptions o;
      o.record = record;
      out.analyses.push_back({a, operatingPoint(nl.circuit, o)});
    } else {
      TransientOptions o = a.transient;
      o.record = record;
      o.progress = progress;
      out.analyses.push_back({a, transient(nl.circuit, o)});
      if (k == lastTransient && nl.output.given) {
        out.report = makeSupplyReport(nl, out.analyses.back().result);
        out.hasReport = true;
      }
    }
  }
  return out;
}

}  // namespace disc

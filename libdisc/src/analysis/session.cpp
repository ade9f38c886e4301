// Running a netlist.
#include <algorithm>

#include "disc/session.hpp"

namespace disc {

RunOutcome runNetlist(Netlist& nl, std::function<bool(double, double)> progress) {
  RunOutcome out;
  const std::vector<std::string> reportSig =
      nl.output.given ? reportSignals(nl) : std::vector<std::string>{};
  std::size_t lastTransient = nl.analyses.size();
  for (std::size_t k = 0; k < nl.analyses.size(); ++k)
    if (nl.analyses[k].kind == AnalysisRequest::Kind::Transient) lastTransient = k;
  for (std::size_t k = 0; k < nl.analyses.size(); ++k) {
    const AnalysisRequest& a = nl.analyses[k];
    std::vector<std::string> record = nl.record;
    for (const auto& s : reportSig)
      if (std::find(record.begin(), record.end(), s) == record.end()) record.push_back(s);
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

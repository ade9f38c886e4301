// The netlist language: a supply described in a text file (docs/netlist.md).
#pragma once

#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "disc/analysis.hpp"
#include "disc/campaign_spec.hpp"
#include "disc/circuit.hpp"
#include "disc/envelope.hpp"
#include "disc/error.hpp"
#include "disc/limits.hpp"
#include "disc/plate_type.hpp"

namespace disc {

/// Where something stands in a netlist file (1-based line and column).
struct SourceLocation {
  std::string file;
  int line = 0;
  int column = 0;
};

/// One problem found in a netlist.
struct Diagnostic {
  SourceLocation where;
  std::string message;
  std::string lineText;  ///< the offending source line (at most about 80 bytes of it, escaped)
  int caret = 0;         ///< display cell of lineText under which the caret stands
  /// "file:line:col: error: message", the line, and a caret under the fault.
  std::string format() const;
};

/// A netlist with errors; what() lists every diagnostic in the file:line:col format.
class NetlistError : public InputError {
 public:
  explicit NetlistError(std::vector<Diagnostic> diagnostics);
  const std::vector<Diagnostic>& diagnostics() const { return diagnostics_; }

 private:
  std::vector<Diagnostic> diagnostics_;
};

/// An analysis requested by a `run` statement.
struct AnalysisRequest {
  enum class Kind { OperatingPoint, Transient, Periodic, WarmUp } kind = Kind::Transient;
  TransientOptions transient;  ///< for Kind::Transient (stop, method, start, max step, reltol)
  PeriodicOptions periodic;    ///< for Kind::Periodic (tolerances, slow clock, warm start)
  /// For Kind::WarmUp: duration and slow tolerances; its `periodic` member sets every periodic
  /// steady state along the way. The callbacks stay empty (the session fills them).
  EnvelopeOptions warmUp;
  SourceLocation where;
};

/// The supply's DC output: the node pair and its load element.
struct OutputSpec {
  std::string positive, negative, load;
  std::string input;  ///< the source whose power is the input (empty: chosen by the report)
  enum class LoadKind { Auto, Capacitive, Resistive } kind = LoadKind::Auto;
  /// An instrument output (`full-scale=`, `range=`): the load is a mean-responding moving-coil
  /// movement whose full-scale current `fullScale` (A) marks `range` (V rms of a sine) on the
  /// scale. 0 when the output is not an instrument.
  double fullScale = 0.0, range = 0.0;
  double accuracyClass =
      2.5;  ///< `class=`: IEC 60051 class index, the permitted error in % of range
  bool given = false;
  bool meter() const { return fullScale > 0.0; }
};

/// The word of an analysis kind in the language: "operating-point", "transient", "periodic",
/// "warm-up".
const char* analysisWord(AnalysisRequest::Kind kind);

/// A parsed, validated netlist, ready to run.
struct Netlist {
  std::string path;  ///< the file, or a name given for text
  std::string title;
  Circuit circuit;
  PlateLibrary plateTypes;  ///< built-in types plus those the file derives or uses
  std::vector<AnalysisRequest> analyses;
  std::vector<std::string> record;  ///< extra signals the file asks for
  OutputSpec output;
  CampaignSpec campaign;  ///< the file's campaign, if it declares one (`campaign`, `vary`, ...)
  /// Where each element and each node reference was written (for topology messages).
  std::map<std::string, SourceLocation> elementWhere;
  std::map<std::string, std::vector<SourceLocation>> nodeRefs;
};

/// A netlist with the built-in plate types and nothing else, to be filled by appendNetlist().
Netlist emptyNetlist(const std::string& name = "<text>");
/// Adds statements (any of the language) to a netlist, with the same checks and messages as a
/// file; `name` stands for the text in messages. Throws NetlistError; the netlist keeps what
/// was added before the failing text.
void appendNetlist(Netlist& netlist, const std::string& text, const std::string& name = "<text>",
                   IncludePolicy policy = IncludePolicy::Trusted);
/// The whole-circuit checks (dangling nodes, parts without a path to gnd, loops of voltage
/// sources and inductors). Throws NetlistError.
void checkNetlist(const Netlist& netlist);
/// One element statement from its parts: kind, name, nodes, and parameters as text values
/// ("4.7k", "se-25mm-square"). The same checks as the language.
void addElement(Netlist& netlist, const std::string& kind, const std::string& name,
                const std::vector<std::string>& nodes,
                const std::vector<std::pair<std::string, std::string>>& params);

/// Parses netlist text; `name` stands for the file in messages and anchors relative paths of
/// `include` and `use` (its directory). Throws NetlistError listing every problem found.
/// `policy` says which files `include` and `use` may read (docs/limits.md).
Netlist parseNetlist(const std::string& text, const std::string& name = "<text>",
                     IncludePolicy policy = IncludePolicy::Trusted);
/// Reads and parses a .disc file (a regular file of at most InputLimits::kNetlistBytes).
Netlist loadNetlist(const std::string& path, IncludePolicy policy = IncludePolicy::Trusted);

/// Settings given from outside the file for every transient it runs (`disc run --record-from
/// --record-spacing --max-steps`). They replace the statements' own before the checks, so a
/// raised step budget lets a run past the default one through (docs/limits.md).
struct TransientOverrides {
  std::optional<double> recordFrom, recordSpacing;  ///< s
  std::optional<long long> maxSteps;
};
/// loadNetlist with the overrides applied to every transient; a value out of range is an
/// error at the run statement it would change.
Netlist loadNetlist(const std::string& path, IncludePolicy policy,
                    const TransientOverrides& overrides);

}  // namespace disc

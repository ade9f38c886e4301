// Campaigns: one netlist run as many variants (a parameter grid, Monte Carlo builds over the
// plate spread and component tolerances), each a row of figures, summarised for the restorer.
#pragma once

#include <array>
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "disc/netlist.hpp"

namespace disc {

/// Philox4x64-10 (J. K. Salmon, M. A. Moraes, R. O. Dror, D. E. Shaw, "Parallel random numbers:
/// as easy as 1, 2, 3", SC 2011): a counter-based generator. Each (key, counter) maps to four
/// independent 64-bit words, so a variant's numbers follow from its index alone, whatever the
/// number of threads or workers and the order they run in.
std::array<std::uint64_t, 4> philox4x64(std::array<std::uint64_t, 4> counter,
                                        std::array<std::uint64_t, 2> key);

/// The numbers of one variant: stream `k` of variant `v` of campaign `seed`.
class VariantRandom {
 public:
  VariantRandom(std::uint64_t seed, std::uint64_t variant) : seed_(seed), variant_(variant) {}
  /// Uniform on [0, 1) with 53 random bits, from stream k.
  double uniform(std::uint64_t k) const;
  /// Standard normal from stream k (Box-Muller on the stream's two words).
  double normal(std::uint64_t k) const;
  /// 53 random bits from stream k (a whole number a double holds exactly).
  std::uint64_t bits53(std::uint64_t k) const;

 private:
  std::array<std::uint64_t, 4> block(std::uint64_t k) const;
  std::uint64_t seed_, variant_;
};

/// What a variant's supply-report figures come from.
enum class CampaignBasis {
  /// The periodic steady state when the circuit has a period and no stop time is given, a
  /// transient otherwise.
  Automatic,
  Periodic,   ///< the settled period (a variant whose periodic state fails runs the transient)
  Transient,  ///< a transient from the netlist's start (cold), switch-on surge included
};

/// How a campaign runs.
struct CampaignOptions {
  int threads = 0;  ///< worker threads; 0 = every core (and never more than the cores)
  /// s, the transient's stop time; 0 = the netlist's last transient (or 1 s).
  double stop = 0.0;
  CampaignBasis basis = CampaignBasis::Automatic;
  /// Relative tolerance of each variant's analysis; 0 = the netlist's transient's (1e-3 by
  /// default). The periodic steady state takes the transient's tolerances.
  double reltol = 0.0;
  /// Called from worker threads as variants finish, with (done, total); return false to cancel
  /// (the campaign then throws Cancelled). May be called concurrently: keep it thread-safe.
  std::function<bool(std::size_t, std::size_t)> progress;
  void validate() const;
};

/// A column of the campaign table: numbers (NaN where the variant failed, with its status
/// column saying why, or where its basis has no such figure: surge_peak on the periodic basis)
/// or words.
struct CampaignColumn {
  std::string name, unit;
  bool text = false;
  std::vector<double> values;      ///< when !text
  std::vector<std::string> words;  ///< when text
};

/// One row per variant, in variant order.
struct CampaignTable {
  std::vector<CampaignColumn> columns;
  std::size_t rows() const;
  /// The column of that name; throws InputError naming the columns otherwise.
  const CampaignColumn& operator[](const std::string& name) const;
  bool has(const std::string& name) const;
};

/// The campaign of a netlist: its own declaration (`campaign`, `vary`, `tolerance` statements)
/// or the given spec. Variants [first, first + count) only (count 0: all from first): the rows
/// are the same whichever range or thread computes them. The circuit is only read.
CampaignTable runCampaign(const Netlist& netlist, const CampaignSpec& spec,
                          const CampaignOptions& options = {}, std::size_t first = 0,
                          std::size_t count = 0);

/// Tables of consecutive variant ranges joined in order (the pieces a cluster computed).
CampaignTable joinCampaignTables(const std::vector<CampaignTable>& parts);

/// The table as CSV: a header of "name [unit]" cells, then one line per variant.
std::string campaignCsv(const CampaignTable& table);

/// Statistics of one numeric column over the variants that ran.
struct ColumnSummary {
  std::string name, unit;
  std::size_t count = 0;  ///< variants with a value
  double mean = 0, stddev = 0, min = 0, max = 0;
  double p05 = 0, p50 = 0, p95 = 0;  ///< percentiles (linear interpolation between order stats)
};

/// One rating judged over the variants: the fraction of builds at or beyond the limit.
struct RatingSummary {
  std::string stack, figure;
  double fractionExceeds = 0, fractionMarginal = 0;
};

/// One parallel arm of a stack over the variants.
struct ArmSummary {
  std::string stack;
  int arm = 1;                   ///< 1-based
  ColumnSummary share;           ///< fraction of the stack current
  ColumnSummary hottest;         ///< K, hottest plate of the arm (steady-state estimate)
  double fractionOverLimit = 0;  ///< builds whose hottest plate in this arm reaches the limit
};

/// The restorer's summary of a campaign.
struct CampaignSummary {
  std::string title, file;
  std::size_t variants = 0, failed = 0;
  /// Variants whose figures come from their settled period, and from a transient (the
  /// table's basis column; both 0 without a supply report).
  std::size_t periodicBasis = 0, transientBasis = 0;
  int builds = 1;
  std::vector<std::string> varied;   ///< what the campaign varies, in words
  std::vector<std::string> reading;  ///< the plain-language reading, first thing in every report
  std::vector<ColumnSummary> figures;
  std::vector<RatingSummary> ratings;
  std::vector<ArmSummary> arms;  ///< every arm of every paralleled stack
  /// Per paralleled stack: the largest arm share reached in 5 % of builds, and its limit.
  struct Sharing {
    std::string stack;
    int arms = 1;
    int heaviestArm = 1;          ///< the arm whose 95th-percentile share is largest
    double share95 = 0;           ///< that percentile
    double imbalance95 = 0;       ///< 95th percentile of (largest share x arms - 1)
    double hottest95 = 0;         ///< K, 95th percentile of the hottest plate over all arms
    double temperatureLimit = 0;  ///< K
    double ratedCurrent = 0;      ///< A, whole stack, at the derated density with equal sharing
    double deratedCurrent =
        0;  ///< A, whole stack, so the heaviest arm stays within its rating in 95 % of builds
  };
  std::vector<Sharing> sharing;
};

/// Summarises a table; `netlist` supplies the title, the stacks' ratings and the arm counts.
CampaignSummary summariseCampaign(const Netlist& netlist, const CampaignSpec& spec,
                                  const CampaignTable& table);

/// The summary as text, JSON (schema kCampaignSchema) and one self-contained HTML page with
/// histograms of the arm shares and a scatter of arm share against hottest-plate temperature.
inline constexpr int kCampaignSchema = 1;
std::string campaignText(const CampaignSummary& summary);
std::string campaignJson(const CampaignSummary& summary);
std::string campaignHtml(const CampaignSummary& summary, const CampaignTable& table);

}  // namespace disc

// Campaigns: the table as columns (numpy arrays and lists, picklable for a cluster), the
// summary from columns, and the counter-based generator (checked against numpy's).
#include <pybind11/numpy.h>
#include <pybind11/stl.h>

#include <chrono>
#include <memory>
#include <mutex>

#include "disc/campaign.hpp"
#include "disc/error.hpp"
#include "register.hpp"

namespace py = pybind11;

namespace disc::python {

namespace {

/// The table as [(name, unit, values)], values a float64 array or a list of str.
py::list tableColumns(CampaignTable&& t) {
  py::list out;
  for (auto& c : t.columns) {
    py::object values;
    if (c.text)
      values = py::cast(std::move(c.words));
    else
      values = py::array_t<double>(static_cast<py::ssize_t>(c.values.size()), c.values.data());
    out.append(py::make_tuple(c.name, c.unit, values));
  }
  return out;
}

CampaignTable tableFrom(const py::list& columns) {
  CampaignTable t;
  for (const auto& item : columns) {
    const auto tup = item.cast<py::tuple>();
    CampaignColumn c;
    c.name = tup[0].cast<std::string>();
    c.unit = tup[1].cast<std::string>();
    py::object values = tup[2];
    if (py::isinstance<py::list>(values)) {
      c.text = true;
      c.words = values.cast<std::vector<std::string>>();
    } else {
      c.values = values.cast<std::vector<double>>();
    }
    t.columns.push_back(std::move(c));
  }
  return t;
}

/// The campaign's progress callback, called from its worker threads as variants finish. It
/// takes the GIL at most every 0.1 s of wall time (and for the last variant), to let Python
/// deliver Ctrl-C and to call `callback(done, total)` when one is given (a false return
/// cancels the campaign). The lock keeps one worker at a time in here.
std::function<bool(std::size_t, std::size_t)> campaignProgress(py::handle callback) {
  using Clock = std::chrono::steady_clock;
  struct State {
    std::mutex lock;
    Clock::time_point next = Clock::now();
  };
  auto state = std::make_shared<State>();
  return [callback, state](std::size_t done, std::size_t total) {
    const std::lock_guard<std::mutex> hold(state->lock);
    const auto now = Clock::now();
    if (now < state->next && done < total) return true;
    state->next = now + std::chrono::milliseconds(100);
    py::gil_scoped_acquire gil;
    if (PyErr_CheckSignals() != 0) {
      PyErr_Clear();
      return false;
    }
    if (!callback.is_none()) {
      py::object keepGoing = callback(done, total);
      if (!keepGoing.is_none() && !keepGoing.cast<bool>()) return false;
    }
    return true;
  };
}

}  // namespace

void registerCampaign(py::module_& m) {
  m.def(
      "run_campaign",
      [](const Netlist& n, int threads, double stop, std::size_t first, std::size_t count,
         py::object progress, const std::string& basis, double reltol) {
        CampaignOptions o;
        o.threads = threads;
        o.stop = stop;
        if (basis == "periodic")
          o.basis = CampaignBasis::Periodic;
        else if (basis == "transient")
          o.basis = CampaignBasis::Transient;
        else if (basis != "auto")
          throw InputError("campaign: basis must be 'auto', 'periodic' or 'transient', got '" +
                           basis + "'");
        o.reltol = reltol;
        o.progress = campaignProgress(progress);
        const Netlist copy = n;  // copied under the GIL, run without it
        CampaignTable t;
        {
          py::gil_scoped_release nogil;
          t = runCampaign(copy, copy.campaign, o, first, count);
        }
        return tableColumns(std::move(t));
      },
      py::arg("netlist"), py::arg("threads") = 0, py::arg("stop") = 0.0, py::arg("first") = 0,
      py::arg("count") = 0, py::arg("progress") = py::none(), py::arg("basis") = "auto",
      py::arg("reltol") = 0.0,
      "Variants [first, first + count) of the netlist's campaign as [(name, unit, values)]; "
      "progress(done, total) at most every 0.1 s (False cancels: KeyboardInterrupt); basis "
      "'auto', 'periodic' or 'transient'; reltol 0: the netlist's.");
  m.def(
      "campaign_variants", [](const Netlist& n) { return n.campaign.variants(); },
      py::arg("netlist"));
  m.def(
      "campaign_summary",
      [](const Netlist& n, const py::list& columns) {
        const CampaignTable t = tableFrom(columns);
        const CampaignSummary s = summariseCampaign(n, n.campaign, t);
        return py::make_tuple(campaignText(s), campaignJson(s), campaignHtml(s, t), campaignCsv(t));
      },
      py::arg("netlist"), py::arg("columns"),
      "(text, JSON, HTML, CSV) of a campaign table given as [(name, unit, values)].");
  m.def(
      "philox4x64",
      [](std::array<std::uint64_t, 4> counter, std::array<std::uint64_t, 2> key) {
        return philox4x64(counter, key);
      },
      py::arg("counter"), py::arg("key"), "Philox4x64-10: four 64-bit words of (counter, key).");
}

}  // namespace disc::python

// The HTML side of the report's plots: interactive waveforms beside static SVG (private).
#pragma once

#include <string>
#include <vector>

#include "disc/session.hpp"

namespace disc::detail {

/// A plot as an HTML figure: for a time series an interactive chart (drawn by the page's
/// script) with its static SVG for print and for readers without scripts; otherwise the SVG.
std::string plotFigureHtml(const Plot& plot, std::size_t index);
/// The page's stylesheet for the plots.
std::string plotStyleHtml();
/// The script that draws every interactive chart of `plots`: the charting library inlined,
/// then the data and the calls, so the page works offline as one file.
std::string plotScriptHtml(const std::vector<Plot>& plots);

}  // namespace disc::detail

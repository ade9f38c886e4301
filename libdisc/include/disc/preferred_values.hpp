// Preferred component values of the IEC 60063 E series (for choosing a real resistor).
#pragma once

#include <vector>

namespace disc {

enum class ESeries { E12, E24 };

/// The mantissas of one decade, 1.0 to below 10, as IEC 60063 lists them.
const std::vector<double>& seriesDecade(ESeries series);
/// The preferred value nearest to `value` (> 0) on a logarithmic scale; throws InputError for
/// values that are not positive and finite.
double nearestPreferred(double value, ESeries series);

}  // namespace disc

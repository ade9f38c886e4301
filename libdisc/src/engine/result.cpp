// Result storage.
#include "disc/result.hpp"

#include <fmt/format.h>
#include <algorithm>

#include "disc/error.hpp"

namespace disc {

bool Result::failed() const {
  return std::any_of(failures_.begin(), failures_.end(),
                     [](const FailureEvent& e) { return e.kind == ThermalCondition::Destroyed; });
}

bool Result::has(std::string_view signal) const {
  return index_.count(std::string(signal)) > 0;
}

std::size_t Result::indexOf(std::string_view signal) const {
  auto it = index_.find(std::string(signal));
  if (it == index_.end()) {
    std::string list;
    list = fmt::format("{}", fmt::join(names_, ", "));
    throw InputError(fmt::format("signal '{}' was not recorded; recorded: {}", signal, list));
  }
  return it->second;
}

const std::vector<double>& Result::operator[](std::string_view signal) const {
  return columns_[indexOf(signal)];
}

const std::string& Result::unit(std::string_view signal) const {
  return units_[indexOf(signal)];
}

Extent Result::extent(std::string_view signal) const {
  const std::size_t k = indexOf(signal);
  if (tracked_) return extents_[k];
  Extent e;
  const auto& c = columns_[k];
  if (c.empty()) return e;
  e.first = c.front();
  e.last = c.back();
  const auto [lo, hi] = std::minmax_element(c.begin(), c.end());
  e.min = *lo;
  e.max = *hi;
  return e;
}

void Result::setRecorded(std::vector<Extent> extents, std::size_t rows) {
  extents_ = std::move(extents);
  extents_.resize(columns_.size());
  recorded_ = rows;
  tracked_ = true;
}

void Result::addSignal(std::string name, std::string unit) {
  if (index_.count(name)) return;
  index_.emplace(name, names_.size());
  names_.push_back(std::move(name));
  units_.push_back(std::move(unit));
  columns_.emplace_back();
}

void Result::reserve(std::size_t points) {
  time_.reserve(points);
  for (auto& c : columns_) c.reserve(points);
}

}  // namespace disc

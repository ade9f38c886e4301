// Numbers with SI prefixes and unit symbols, checked against a parameter's dimension (private).
#pragma once

#include <optional>
#include <string>

namespace disc::detail {

enum class Dim {
  None,
  Voltage,
  Current,
  Resistance,
  Capacitance,
  Inductance,
  Frequency,
  Time,
  Power,
  Energy,
  Temperature,
  Angle,
  ThermalResistance,   // K/W
  ThermalConductance,  // W/K
  HeatCapacity         // J/K
};

const char* dimName(Dim d);
/// The SI unit symbol of a dimension, for messages ("V", "ohm", ...).
const char* dimUnit(Dim d);

/// The dimension whose SI unit is `symbol` ("A" -> Current, "K" -> Temperature, "K/W" ->
/// ThermalResistance); None for any other or an empty symbol, whose values are plain numbers.
Dim dimOfUnit(const std::string& symbol);

/// Parses "4.7k", "100uF", "2.5 ms" (no space), "30degC", "-3V", "1e-6". The value is in SI base
/// units (temperatures in K, angles in degrees). On failure returns nullopt and sets `error`.
std::optional<double> parseQuantity(const std::string& text, Dim dim, std::string& error);

}  // namespace disc::detail

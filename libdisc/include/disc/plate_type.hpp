// Plate types: the data describing one metal-disc rectifier plate (selenium, copper oxide, or
// any material given by data), and the library of built-in and user types.
#pragma once

#include <map>
#include <string>
#include <vector>

#include "disc/failure.hpp"

namespace disc {

/// Physical parameters of one plate. Per-area values are scaled by the active area.
/// Units are SI except where the name says otherwise (areas in cm^2 as the trade quotes them).
struct PlatePhysics {
  double areaCm2 = 5.0;          ///< active (rectifying) area, cm^2
  double js0 = 1e-5;             ///< barrier saturation current density at t0, A/cm^2
  double ideality = 3.0;         ///< emission (ideality) coefficient n of the forward law
  double barrierEv = 0.716;      ///< barrier height phiB for the temperature law of Js, eV
  double t0 = 300.0;             ///< reference temperature of the parameters, K
  double imageForce = 1.5;       ///< image-force coefficient b at t0, V^-1/4
  double builtIn = 0.8;          ///< built-in potential Vbi, V
  double rsArea = 10.0;          ///< bulk and contact resistance x area at t0, ohm cm^2
  double rsActivationEv = 0.15;  ///< activation energy of Rs(T), eV (NTC)
  double gshArea = 2e-5;         ///< shunt leakage conductance per area, formed, at t0, S/cm^2
  double gshActivationEv = 0.3;  ///< activation energy of the leakage, eV
  double breakdownV = 55.0;      ///< soft breakdown voltage per plate, V
  double breakdownSlopeV = 3.0;  ///< voltage scale of the breakdown exponential, V
  double breakdownJ0 = 1e-3;     ///< breakdown current density at breakdownV, A/cm^2
  double c0Area = 0.03e-6;       ///< zero-bias barrier capacitance per area, F/cm^2
  double fc = 0.5;               ///< forward linearisation point of C(V), fraction of Vbi
  double trapCArea = 0.03e-6;    ///< trap-branch capacitance per area, F/cm^2
  double trapTau = 0.02;         ///< trap-branch time constant Rt Ct at t0, s
  /// Activation of the trap emission rate, eV: the trap conductance 1/Rt follows Arrhenius,
  /// so Rt Ct shortens as the plate warms (0: a fixed time constant).
  double trapActivationEv = 0.0;
};

/// Heat path of one plate.
struct PlateThermal {
  double rth = 67.0;          ///< plate to ambient, K/W
  double cth = 1.5;           ///< heat capacity, J/K
  double rthCoupling = 50.0;  ///< to each neighbour on the same spindle, K/W
};

/// Forming (state F in [0, 1], 1 = fully formed) and ageing laws. libdisc's own proposal: no
/// published kinetic model exists; the constants are to be fitted.
struct PlateHistory {
  double deformedLeakFactor = 10.0;  ///< leakage multiplier at F = 0
  double reformTau = 600.0;          ///< re-forming time constant at reformVoltage and t0, s
  double reformVoltage = 20.0;       ///< reverse voltage per plate of reformTau, V
  double reformActivationEv = 0.5;   ///< temperature acceleration of re-forming, eV
  double storageTauYears = 10.0;     ///< decay time of F when unpowered at t0, years
  double storageActivationEv = 0.5;  ///< Arrhenius acceleration of that decay, eV
  double ageCoefficient = 0.3;       ///< a: ageing term A = a ln(1 + H/H0), Rs factor 1 + A
  double ageHoursScale = 1000.0;     ///< H0, h
  double ageActivationEv = 0.5;      ///< Arrhenius weighting of operating hours, eV
  double ageLeakProportion = 1.0;    ///< leakage factor 1 + this x A
  double ageThresholdV = 0.05;       ///< forward threshold rise per unit of A, V per plate
};

/// Ratings as the trade states them, per plate.
struct PlateRatings {
  double rmsReverseResistive = 26.0;    ///< V rms, resistive load
  double rmsReverseCapacitive = 13.0;   ///< V rms, capacitive (reservoir) load
  double peakReverse = 36.77;           ///< V
  double currentDensity = 0.030;        ///< rated DC average density, natural cooling, A/cm^2
  double maxPlateTemperature = 348.15;  ///< K
  double ambientReference = 308.15;     ///< K, full rating up to this ambient
};

/// How heat destroys a plate (docs/plate-model.md, "Failure").
struct PlateFailure {
  double destructionTemperature = 376.15;  ///< K, destroyed at or above
  FailureMode mode = FailureMode::Short;   ///< what the destroyed plate becomes
  /// What happens at that temperature, in words.
  std::string mechanism = "the counter-electrode alloy melts";
};

/// One plate type.
struct PlateType {
  std::string name;         ///< e.g. "se-25mm-square"
  std::string material;     ///< "selenium", "copper-oxide", or another by data
  std::string description;  ///< plain words
  PlatePhysics physics;
  PlateThermal thermal;
  PlateHistory history;
  PlateRatings ratings;
  PlateFailure failure;
  /// Source or mark of each value ("field" -> "Metallic Rectifiers, 1957", "(from memory)", ...).
  std::map<std::string, std::string> notes;

  /// Rated average current of one plate, A.
  double ratedCurrent() const { return ratings.currentDensity * physics.areaCm2; }
  /// Throws InputError naming the first value out of its physical range.
  void validate() const;
  /// Sets a parameter by its JSON name (e.g. "rs_area", "rth"); throws InputError with a
  /// did-you-mean for an unknown name.
  void set(const std::string& key, double value);
  /// Reads a parameter by its JSON name.
  double get(const std::string& key) const;
  /// All numeric parameter names.
  static std::vector<std::string> parameterNames();
};

/// A set of plate types by name.
class PlateLibrary {
 public:
  /// The built-in types (shipped JSON compiled into the library).
  static const PlateLibrary& builtIn();
  /// Parses a JSON document holding {"schema": 1, "types": [...]} or a single type object.
  static PlateLibrary fromJson(std::string text, const std::string& origin = "<json>");
  static PlateLibrary load(const std::string& path);

  const PlateType& at(const std::string& name) const;  ///< throws InputError with suggestions
  const PlateType* find(const std::string& name) const;
  void add(PlateType type);  ///< replaces a type of the same name
  std::vector<std::string> names() const;
  const std::vector<PlateType>& types() const { return types_; }

  /// A new type from `base` with some parameters changed.
  static PlateType derive(const PlateType& base, const std::string& name,
                          const std::map<std::string, double>& changes);

  /// JSON text of one type or of the whole library (the same schema as the shipped file).
  static std::string toJson(const PlateType& type);
  std::string toJson() const;
  static void save(const PlateType& type, const std::string& path);

 private:
  std::vector<PlateType> types_;
};

}  // namespace disc

// Plate types: parameter table, validation, JSON reading and writing.
#include "disc/plate_type.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <fstream>
#include <functional>
#include <nlohmann/json.hpp>
#include <sstream>

#include "core/safe_io.hpp"
#include "core/text_match.hpp"
#include "disc/error.hpp"
#include "disc/files.hpp"
#include "disc/limits.hpp"

namespace disc {

extern const char* const kBuiltInPlateTypesJson;  // generated from libdisc/data/plate-types.json

namespace {

using nlohmann::json;

/// One numeric parameter: its JSON group and key, where it lives, its range and unit.
struct Field {
  const char* group;
  const char* key;
  std::function<double&(PlateType&)> ref;
  double lo, hi;  // inclusive physical range (in the JSON unit)
  bool celsius;   // stored in K, written in degC
  const char* unit;
};

const std::vector<Field>& fields() {
  static const std::vector<Field> table = {
      {"physics", "area_cm2", [](PlateType& t) -> double& { return t.physics.areaCm2; }, 1e-4, 1e4,
       false, "cm2"},
      {"physics", "js0_A_per_cm2", [](PlateType& t) -> double& { return t.physics.js0; }, 1e-15,
       1.0, false, "A/cm2"},
      {"physics", "ideality", [](PlateType& t) -> double& { return t.physics.ideality; }, 0.5, 20.0,
       false, ""},
      {"physics", "barrier_eV", [](PlateType& t) -> double& { return t.physics.barrierEv; }, 0.0,
       3.0, false, "eV"},
      {"physics", "t0_K", [](PlateType& t) -> double& { return t.physics.t0; }, 150.0, 500.0, false,
       "K"},
      {"physics", "image_force_per_V4",
       [](PlateType& t) -> double& { return t.physics.imageForce; }, 0.0, 20.0, false, "V^-1/4"},
      {"physics", "built_in_V", [](PlateType& t) -> double& { return t.physics.builtIn; }, 0.05,
       5.0, false, "V"},
      {"physics", "rs_ohm_cm2", [](PlateType& t) -> double& { return t.physics.rsArea; }, 1e-4, 1e5,
       false, "ohm cm2"},
      {"physics", "rs_activation_eV",
       [](PlateType& t) -> double& { return t.physics.rsActivationEv; }, 0.0, 1.5, false, "eV"},
      {"physics", "gsh_S_per_cm2", [](PlateType& t) -> double& { return t.physics.gshArea; }, 0.0,
       1.0, false, "S/cm2"},
      {"physics", "gsh_activation_eV",
       [](PlateType& t) -> double& { return t.physics.gshActivationEv; }, 0.0, 2.0, false, "eV"},
      {"physics", "breakdown_V", [](PlateType& t) -> double& { return t.physics.breakdownV; }, 0.5,
       1e4, false, "V"},
      {"physics", "breakdown_slope_V",
       [](PlateType& t) -> double& { return t.physics.breakdownSlopeV; }, 0.01, 1e3, false, "V"},
      {"physics", "breakdown_J0_A_per_cm2",
       [](PlateType& t) -> double& { return t.physics.breakdownJ0; }, 0.0, 10.0, false, "A/cm2"},
      {"physics", "c0_F_per_cm2", [](PlateType& t) -> double& { return t.physics.c0Area; }, 0.0,
       1e-3, false, "F/cm2"},
      {"physics", "fc", [](PlateType& t) -> double& { return t.physics.fc; }, 0.05, 0.95, false,
       ""},
      {"physics", "trap_c_F_per_cm2", [](PlateType& t) -> double& { return t.physics.trapCArea; },
       0.0, 1e-3, false, "F/cm2"},
      {"physics", "trap_tau_s", [](PlateType& t) -> double& { return t.physics.trapTau; }, 1e-6,
       1e3, false, "s"},
      {"physics", "trap_activation_eV",
       [](PlateType& t) -> double& { return t.physics.trapActivationEv; }, 0.0, 2.0, false, "eV"},
      {"thermal", "rth_K_per_W", [](PlateType& t) -> double& { return t.thermal.rth; }, 0.01, 1e5,
       false, "K/W"},
      {"thermal", "cth_J_per_K", [](PlateType& t) -> double& { return t.thermal.cth; }, 1e-4, 1e5,
       false, "J/K"},
      {"thermal", "rth_coupling_K_per_W",
       [](PlateType& t) -> double& { return t.thermal.rthCoupling; }, 0.01, 1e6, false, "K/W"},
      {"history", "deformed_leak_factor",
       [](PlateType& t) -> double& { return t.history.deformedLeakFactor; }, 1.0, 1e4, false, ""},
      {"history", "reform_tau_s", [](PlateType& t) -> double& { return t.history.reformTau; }, 1e-3,
       1e8, false, "s"},
      {"history", "reform_voltage_V",
       [](PlateType& t) -> double& { return t.history.reformVoltage; }, 0.1, 1e4, false, "V"},
      {"history", "reform_activation_eV",
       [](PlateType& t) -> double& { return t.history.reformActivationEv; }, 0.0, 2.0, false, "eV"},
      {"history", "storage_tau_years",
       [](PlateType& t) -> double& { return t.history.storageTauYears; }, 0.01, 1e4, false,
       "years"},
      {"history", "storage_activation_eV",
       [](PlateType& t) -> double& { return t.history.storageActivationEv; }, 0.0, 2.0, false,
       "eV"},
      {"history", "age_coefficient",
       [](PlateType& t) -> double& { return t.history.ageCoefficient; }, 0.0, 100.0, false, ""},
      {"history", "age_hours_scale_h",
       [](PlateType& t) -> double& { return t.history.ageHoursScale; }, 1.0, 1e7, false, "h"},
      {"history", "age_activation_eV",
       [](PlateType& t) -> double& { return t.history.ageActivationEv; }, 0.0, 2.0, false, "eV"},
      {"history", "age_leak_proportion",
       [](PlateType& t) -> double& { return t.history.ageLeakProportion; }, 0.0, 100.0, false, ""},
      {"history", "age_threshold_V",
       [](PlateType& t) -> double& { return t.history.ageThresholdV; }, 0.0, 5.0, false, "V"},
      {"ratings", "rms_reverse_resistive_V",
       [](PlateType& t) -> double& { return t.ratings.rmsReverseResistive; }, 0.1, 1e4, false, "V"},
      {"ratings", "rms_reverse_capacitive_V",
       [](PlateType& t) -> double& { return t.ratings.rmsReverseCapacitive; }, 0.1, 1e4, false,
       "V"},
      {"ratings", "peak_reverse_V", [](PlateType& t) -> double& { return t.ratings.peakReverse; },
       0.1, 1e4, false, "V"},
      {"ratings", "current_density_A_per_cm2",
       [](PlateType& t) -> double& { return t.ratings.currentDensity; }, 1e-6, 100.0, false,
       "A/cm2"},
      {"ratings", "max_plate_temp_C",
       [](PlateType& t) -> double& { return t.ratings.maxPlateTemperature; }, -50.0, 400.0, true,
       "degC"},
      {"ratings", "ambient_reference_C",
       [](PlateType& t) -> double& { return t.ratings.ambientReference; }, -50.0, 200.0, true,
       "degC"},
      // Below the plate laws' 700 K clamp (plate_model.hpp), so a run always stops first.
      {"failure", "destruction_temp_C",
       [](PlateType& t) -> double& { return t.failure.destructionTemperature; }, 0.0, 400.0, true,
       "degC"},
  };
  return table;
}

const Field* fieldOf(const std::string& key) {
  for (const auto& f : fields())
    if (key == f.key) return &f;
  return nullptr;
}

std::vector<std::string> keys() {
  std::vector<std::string> k;
  for (const auto& f : fields()) k.emplace_back(f.key);
  return k;
}

double toJsonUnit(const Field& f, double v) {
  return f.celsius ? v - 273.15 : v;
}
double fromJsonUnit(const Field& f, double v) {
  return f.celsius ? v + 273.15 : v;
}

/// "file:line:col" of the first `"key"` after the plate type named `typeName` in the JSON text
/// (nlohmann's values carry no positions); the file alone when it cannot be found.
std::string locate(const std::string& text, const std::string& origin, const std::string& typeName,
                   const std::string& key) {
  std::size_t from = 0;
  if (!typeName.empty()) {
    const std::size_t at = text.find("\"" + typeName + "\"");
    if (at != std::string::npos) from = at;
  }
  std::size_t at = key.empty() ? std::string::npos : text.find("\"" + key + "\"", from);
  if (at == std::string::npos) at = from;
  if (at == 0 && typeName.empty() && key.empty()) return origin;
  int line = 0, col = 0;
  detail::lineColumnOf(text, at, line, col);
  return fmt::format("{}:{}:{}", origin, line, col);
}

PlateType typeFromJson(const json& j, const std::string& origin, const std::string& text) {
  PlateType t;
  auto where = [&](const std::string& key, const std::string& what) {
    return fmt::format("{}: plate type '{}': {}", locate(text, origin, t.name, key), t.name, what);
  };
  if (!j.is_object()) throw InputError(origin + ": a plate type must be a JSON object");
  if (!j.contains("name") || !j["name"].is_string())
    throw InputError(locate(text, origin, "", "name") + ": a plate type needs a \"name\" string");
  t.name = j["name"].get<std::string>();
  if (!validName(t.name))
    throw InputError(fmt::format(
        "{}: '{}' is not a valid plate-type name: use 1 to {} ASCII letters, digits and _ - . +",
        locate(text, origin, "", "name"), t.name, InputLimits::kNameLength));
  for (const char* key : {"material", "description"})
    if (j.contains(key) && !j[key].is_string())
      throw InputError(where(key, fmt::format("\"{}\" must be a string", key)));
  t.material = j.value("material", std::string("selenium"));
  t.description = j.value("description", std::string());
  for (const char* group : {"physics", "thermal", "history", "ratings", "failure"}) {
    if (!j.contains(group)) continue;
    if (!j[group].is_object())
      throw InputError(where(group, fmt::format("\"{}\" must be an object", group)));
    for (const auto& [key, value] : j[group].items()) {
      if (std::string(group) == "failure" && (key == "fails_to" || key == "mechanism")) {
        if (!value.is_string())
          throw InputError(where(key, fmt::format("\"{}\" must be a string", key)));
        if (key == "fails_to")
          t.failure.mode = parseFailureMode(value.get<std::string>());
        else
          t.failure.mechanism = value.get<std::string>();
        continue;
      }
      const Field* f = fieldOf(key);
      if (!f || std::string(f->group) != group)
        throw InputError(where(key, fmt::format("unknown parameter \"{}\" in \"{}\"{}", key, group,
                                                detail::didYouMean(key, keys()))));
      if (!value.is_number())
        throw InputError(where(key, fmt::format("\"{}\" must be a number", key)));
      try {
        t.set(key, value.get<double>());
      } catch (const InputError& e) {
        throw InputError(where(key, e.what()));
      }
    }
  }
  if (j.contains("notes")) {
    if (!j["notes"].is_object()) throw InputError(where("notes", "\"notes\" must be an object"));
    for (const auto& [key, value] : j["notes"].items())
      if (value.is_string()) t.notes[key] = value.get<std::string>();
  }
  try {
    t.validate();
  } catch (const InputError& e) {
    throw InputError(where("", e.what()));
  }
  return t;
}

json typeToJson(const PlateType& t) {
  json j;
  j["name"] = t.name;
  j["material"] = t.material;
  j["description"] = t.description;
  PlateType copy = t;
  for (const auto& f : fields()) j[f.group][f.key] = toJsonUnit(f, f.ref(copy));
  j["failure"]["fails_to"] = failureModeName(t.failure.mode);
  j["failure"]["mechanism"] = t.failure.mechanism;
  if (!t.notes.empty()) j["notes"] = t.notes;
  return j;
}

}  // namespace

void PlateType::validate() const {
  if (name.empty()) throw InputError("a plate type needs a name");
  if (material.empty()) throw InputError(fmt::format("plate type '{}' needs a material", name));
  PlateType copy = *this;
  for (const auto& f : fields()) {
    const double v = toJsonUnit(f, f.ref(copy));
    if (!std::isfinite(v) || v < f.lo || v > f.hi)
      throw InputError(
          fmt::format("{} = {} {} is outside its range [{}, {}]", f.key, v, f.unit, f.lo, f.hi));
  }
  if (ratings.peakReverse < ratings.rmsReverseResistive)
    throw InputError(
        fmt::format("plate type '{}': peak reverse rating below its rms rating", name));
  if (failure.destructionTemperature <= ratings.maxPlateTemperature)
    throw InputError(fmt::format(
        "plate type '{}': destruction temperature {:.1f} degC is not above the highest rated "
        "plate temperature {:.1f} degC; set failure.destruction_temp_C above max_plate_temp_C",
        name, failure.destructionTemperature - 273.15, ratings.maxPlateTemperature - 273.15));
}

void PlateType::set(const std::string& key, double value) {
  const Field* f = fieldOf(key);
  if (!f)
    throw InputError(
        fmt::format("unknown plate parameter '{}'{}", key, detail::didYouMean(key, keys())));
  if (!std::isfinite(value) || value < f->lo || value > f->hi)
    throw InputError(fmt::format("plate parameter {} = {} {} is outside its range [{}, {}]", key,
                                 value, f->unit, f->lo, f->hi));
  f->ref(*this) = fromJsonUnit(*f, value);
}

double PlateType::get(const std::string& key) const {
  const Field* f = fieldOf(key);
  if (!f)
    throw InputError(
        fmt::format("unknown plate parameter '{}'{}", key, detail::didYouMean(key, keys())));
  PlateType copy = *this;
  return toJsonUnit(*f, f->ref(copy));
}

std::vector<std::string> PlateType::parameterNames() {
  return keys();
}

const PlateLibrary& PlateLibrary::builtIn() {
  static const PlateLibrary lib = fromJson(kBuiltInPlateTypesJson, "built-in plate types");
  return lib;
}

PlateLibrary PlateLibrary::fromJson(std::string text, const std::string& origin) {
  detail::stripBom(text);
  if (text.size() > InputLimits::kPlateFileBytes)
    throw InputError(fmt::format("{}: {} bytes of plate types, above the limit of {} bytes", origin,
                                 text.size(), InputLimits::kPlateFileBytes));
  json j;
  try {
    j = json::parse(text);
  } catch (const json::parse_error& e) {
    int line = 0, col = 0;
    detail::lineColumnOf(text, e.byte > 0 ? e.byte - 1 : 0, line, col);
    // nlohmann's message repeats the position and quotes the text read; keep its reason only.
    std::string why = e.what();
    if (const auto colon = why.rfind(": "); colon != std::string::npos) why = why.substr(colon + 2);
    throw InputError(
        fmt::format("{}:{}:{}: not valid JSON: {}", origin, line, col, boundedMessage(why, 200)));
  } catch (const json::exception& e) {
    // A number out of range (1e400): nlohmann names the text, which locates it.
    const std::string why = e.what();
    const auto q0 = why.find('\''), q1 = why.rfind('\'');
    std::string at = origin;
    if (q0 != std::string::npos && q1 > q0 + 1)
      if (const auto pos = text.find(why.substr(q0 + 1, q1 - q0 - 1)); pos != std::string::npos) {
        int line = 0, col = 0;
        detail::lineColumnOf(text, pos, line, col);
        at = fmt::format("{}:{}:{}", origin, line, col);
      }
    throw InputError(fmt::format("{}: not usable JSON: {}", at, boundedMessage(why, 200)));
  }
  PlateLibrary lib;
  try {
    if (j.is_object() && j.contains("types")) {
      if (j.contains("schema") && !j["schema"].is_number_integer())
        throw InputError(locate(text, origin, "", "schema") +
                         ": \"schema\" must be a whole number");
      const int schema = j.value("schema", 1);
      if (schema != 1)
        throw InputError(fmt::format("{}: plate-type schema {} is not supported (this is 1)",
                                     locate(text, origin, "", "schema"), schema));
      if (!j["types"].is_array())
        throw InputError(locate(text, origin, "", "types") + ": \"types\" must be an array");
      if (j["types"].size() > static_cast<std::size_t>(InputLimits::kPlateTypes))
        throw InputError(fmt::format("{}: {} plate types, above the limit of {}",
                                     locate(text, origin, "", "types"), j["types"].size(),
                                     InputLimits::kPlateTypes));
      for (const auto& t : j["types"]) lib.add(typeFromJson(t, origin, text));
    } else {
      lib.add(typeFromJson(j, origin, text));
    }
  } catch (const json::exception& e) {
    // Every access above checks its type; this is the boundary for anything overlooked.
    throw InputError(
        fmt::format("{}: unusable plate-type JSON: {}", origin, boundedMessage(e.what(), 200)));
  }
  return lib;
}

PlateLibrary PlateLibrary::load(const std::string& path) {
  return fromJson(detail::readInputFile(path, InputLimits::kPlateFileBytes, "plate-type file"),
                  path);
}

const PlateType* PlateLibrary::find(const std::string& name) const {
  for (const auto& t : types_)
    if (t.name == name) return &t;
  return nullptr;
}

const PlateType& PlateLibrary::at(const std::string& name) const {
  if (const PlateType* t = find(name)) return *t;
  throw InputError(
      fmt::format("unknown plate type '{}'{}", name, detail::didYouMean(name, names())));
}

void PlateLibrary::add(PlateType type) {
  type.validate();
  for (auto& t : types_)
    if (t.name == type.name) {
      t = std::move(type);
      return;
    }
  types_.push_back(std::move(type));
}

std::vector<std::string> PlateLibrary::names() const {
  std::vector<std::string> n;
  for (const auto& t : types_) n.push_back(t.name);
  return n;
}

PlateType PlateLibrary::derive(const PlateType& base, const std::string& name,
                               const std::map<std::string, double>& changes) {
  PlateType t = base;
  t.name = name;
  t.description = fmt::format("derived from {}", base.name);
  for (const auto& [key, value] : changes) {
    t.set(key, value);
    t.notes[key] = fmt::format("set when deriving from {}", base.name);
  }
  t.validate();
  return t;
}

std::string PlateLibrary::toJson(const PlateType& type) {
  return typeToJson(type).dump(2, ' ', false, nlohmann::json::error_handler_t::replace);
}

std::string PlateLibrary::toJson() const {
  json j;
  j["schema"] = 1;
  j["types"] = json::array();
  for (const auto& t : types_) j["types"].push_back(typeToJson(t));
  return j.dump(2, ' ', false, nlohmann::json::error_handler_t::replace);
}

void PlateLibrary::save(const PlateType& type, const std::string& path) {
  writeFileAtomically(path, toJson(type) + "\n");
}

}  // namespace disc

// Uses the installed libdisc: a resistive divider by Ohm's law, and the installed plate data.
#include <disc/disc.hpp>

#include <cmath>
#include <cstdio>
#include <fstream>

int main() {
  disc::Circuit c;
  c.emplace<disc::VoltageSource>("V1", c.node("in"), disc::kGround, disc::Waveform::dc(12.0));
  c.emplace<disc::Resistor>("R1", c.node("in"), c.node("mid"), 1e3);
  c.emplace<disc::Resistor>("R2", c.node("mid"), disc::kGround, 2e3);
  const disc::Result r = disc::operatingPoint(c);
  const double v = r["v:mid"][0];
  if (std::abs(v - 8.0) > 1e-6) {
    std::printf("divider: %.9g V, expected 8 V\n", v);
    return 1;
  }
  std::ifstream data(DISC_DATA_DIR "/plate-types.json");
  if (!data) {
    std::printf("no plate data at %s\n", DISC_DATA_DIR);
    return 1;
  }
  std::printf("libdisc %s from the installed tree: divider %.6f V\n", disc::kVersion, v);
  return 0;
}

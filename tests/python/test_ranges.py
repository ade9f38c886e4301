"""The ranges of physical sense (docs/netlist.md "Ranges of physical sense") hold in Python as in
the netlist: the builder and an element's parameter setting refuse a value outside its device's
range with disc.InputError naming the value and the range, and leave the circuit as it was."""
import pytest

import disc


def supply():
    c = disc.Circuit()
    c.voltage("V1", "a", "gnd", dc=10.0, resistance=1.0)
    c.resistor("R1", "a", "gnd", 1000.0)
    return c


@pytest.mark.parametrize("build,message", [
    (lambda c: c.resistor("R2", "a", "gnd", 1e-300),
     r"R2: resistance 1e-300 ohm is outside 1e-06 to 1e\+12 ohm"),
    (lambda c: c.current("I1", "a", "gnd", dc=1e6),
     r"I1: dc 1e\+06 A is outside -10000 to 10000 A"),
    (lambda c: c.lamp("LP1", "a", "gnd", rated_power=1e6, rated_voltage=230.0),
     r"LP1: rated-power 1e\+06 W is outside 0.001 to 100000 W"),
    (lambda c: c.valve_load("VL1", "a", "gnd", rated_current=1e3, rated_voltage=250.0),
     r"VL1: rated-current 1000 A is outside 1e-06 to 100 A"),
    (lambda c: c.electrolytic("C1", "a", "gnd", capacitance=100.0, rated_voltage=450.0),
     r"C1: capacitance 100 F is outside 1e-08 to 10 F"),
    (lambda c: c.switch("S1", "a", "gnd", close=0.01, on_resistance=1e-12),
     r"S1: on-resistance 1e-12 ohm is outside 1e-06 to 1e\+12 ohm"),
])
def test_the_builder_refuses_values_outside_their_range(build, message):
    c = supply()
    with pytest.raises(disc.InputError, match=message) as e:
        build(c)
    assert "Ranges of physical sense" in str(e.value)
    assert isinstance(e.value, ValueError) and isinstance(e.value, disc.Error)


@pytest.mark.parametrize("element,parameter,value,message", [
    ("R1", "resistance", 1e-300, r"resistance 1e-300 ohm is outside 1e-06 to 1e\+12 ohm"),
    ("V1", "dc", 2e6, r"dc 2e\+06 V is outside -1e\+06 to 1e\+06 V"),
    ("S1", "off_resistance", 1e15, r"off-resistance 1e\+15 ohm is outside 1e-06 to 1e\+12 ohm"),
    ("LP1", "filament_temp", 400.0, "filament-temp 400 K is outside 500 to 3600 K"),
])
def test_parameter_setting_refuses_values_outside_their_range(element, parameter, value, message):
    c = supply()
    c.switch("S1", "a", "gnd", close=0.01)
    c.lamp("LP1", "a", "gnd", rated_power=60.0, rated_voltage=230.0)
    before = getattr(c[element], parameter)
    with pytest.raises(disc.InputError, match=message):
        setattr(c[element], parameter, value)
    assert getattr(c[element], parameter) == before
    # The edge of the range is accepted.
    c["R1"].resistance = 1e12
    assert c["R1"].resistance == 1e12


def test_a_device_rule_inside_the_range_still_holds():
    # 1e-4 ohm lies in the switch's range, but below its closed resistance: the switch says so.
    c = supply()
    c.switch("S1", "a", "gnd", close=0.01, on_resistance=1e-3)
    with pytest.raises(disc.InputError, match="open resistance must exceed closed resistance"):
        c["S1"].off_resistance = 1e-4
    assert c["S1"].off_resistance == 1e9

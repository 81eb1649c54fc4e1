"""A starter drawing: ``coilstage init [--system 24V] [--stages 4] -o DRAWING.toml``.

The starter is a complete, valid drawing to edit: every key has a comment saying what it is and
which unit it takes, and every figure that describes a particular vehicle is marked
``(invented)`` — it was made up to be plausible and must be replaced by the installation's own
data plates and datasheets. As written, it loads and checks without a FAIL (its tests hold this for
every system voltage and stage count it offers); a WARN may remain where the example alternator is
smaller than the retarder's demand, as it often is on a real vehicle.

Layout: battery, a main fuse and feed to a distribution block, one fuse, contactor and cable per
stage, each stage returning on its own cable to a ground stud with one return cable to the battery
negative.
"""

from __future__ import annotations

import argparse
import re
import sys
from dataclasses import dataclass
from pathlib import Path

EXIT_OK, EXIT_BAD_INPUT = 0, 2
HELP = "write a commented starter drawing to edit (a valid example that checks without a FAIL)"
#: stage counts offered per system voltage (each one held to check without a FAIL by the tests)
STAGES = {24: range(1, 7), 12: range(1, 3)}


@dataclass(frozen=True)
class _System:
    volts: int
    code: str
    code_range: str
    emf: str
    rint: str
    capacity: str
    setpoint: str
    tolerance: str
    source_r: str
    idle: str
    rated: str
    base_load: str
    coil_r: str
    inductance: str
    turns: int
    rth: str
    rth_moving: str
    conductor_mass: str
    iron_mass: str
    branch_size: str
    branch_fuse: str
    branch_fuse_type: str
    branch_fuse_v: str
    branch_fuse_bc: str
    branch_fuse_i2t: str
    relay_key: str
    relay_rating: str
    relay_other: str
    relay_voltage: str
    relay_coil: str
    suppression: str
    suppression_note: str
    cca: str = "1000 A"  # cold-cranking current of one 12 V block (invented)
    isc: str = "3 kA"  # rated short-circuit current (invented)
    compensation: str = "-20 mV/K"  # the shipped nominal gradient for this system
    rint_high: str = "15 mohm"  # internal resistance cold and half discharged (invented)


_SYSTEMS = {
    24: _System(
        24,
        "F",
        "16-32 V",
        "25.2 V",
        "9 mohm",
        "225 A*h",
        "28.2 V",
        "0.3 V",
        "25 mohm",
        "100 A",
        "150 A",
        "40 A",
        "1.30 ohm @ 20 degC",
        "90 mH",
        210,
        "0.35 K/W",
        "0.25 K/W",
        "9 kg",
        "12 kg",
        "25 mm^2",
        "100 A",
        "B",
        "58 V",
        "5 kA",
        "40000 A^2*s",
        "rating_24v",
        "150 A",
        'rating_12v = "200 A"  # the same contacts at 12 V (invented)',
        "125 V",
        '{ voltage = "24 V", resistance = "120 ohm @ 20 degC", operate_voltage = "15 V", '
        'feed_resistance = "1.5 ohm", rise = "25 K" }',
        '{ kind = "diode_zener", zener_voltage = "24 V", forward_voltage = "0.9 V", peak_current = "150 A", '
        'reverse_voltage = "400 V", energy_rating = "120 J" }',
        "a diode and a 24 V zener across the coils: the contact breaks into the clamp, the field decays fast",
    ),
    12: _System(
        12,
        "C",
        "9-16 V",
        "12.5 V",
        "7 mohm",
        "140 A*h",
        "14.2 V",
        "0.2 V",
        "12 mohm",
        "90 A",
        "150 A",
        "30 A",
        "0.36 ohm @ 20 degC",
        "25 mH",
        95,
        "0.45 K/W",
        "0.35 K/W",
        "4 kg",
        "6 kg",
        "50 mm^2",
        "160 A",
        "single-bolt",
        "58 V",
        "5 kA",
        "60000 A^2*s",
        "rating_12v",
        "150 A",
        "",
        "32 V",
        '{ voltage = "12 V", resistance = "30 ohm @ 20 degC", operate_voltage = "7.5 V", feed_resistance = "0.8 ohm", '
        'rise = "20 K" }',
        '{ kind = "diode", forward_voltage = "0.9 V", peak_current = "200 A", reverse_voltage = "200 V", '
        'energy_rating = "20 J" }',
        "a freewheel diode across the coils: no arc at the contact, but the field decays slowly",
        cca="800 A",
        isc="2 kA",
        compensation="-10 mV/K",
        rint_high="12 mohm",
    ),
}

#: main fuse, main feed and return by the number of stages (each row held by the tests)
_MAIN = {
    24: {
        1: ("SF51", "150 A", "35 mm^2"),
        2: ("SF51", "200 A", "50 mm^2"),
        3: ("SF51", "300 A", "95 mm^2"),
        4: ("SF51", "350 A", "95 mm^2"),
        5: ("SF51", "450 A", "120 mm^2"),
        6: ("SF51", "500 A", "120 mm^2"),
    },
    12: {1: ("single-bolt", "200 A", "95 mm^2"), 2: ("SF51", "350 A", "120 mm^2")},
}


#: (system, stages) -> battery internal resistance, capacity and a high resistance in service, where a
#: retarder this large needs a stiffer battery bank than the system's usual one: the smallest fault
#: current (a half-charged, cold, aged battery) must still clear the main fuse in time
_BANK = {
    (24, 5): ("6 mohm", "340 A*h", "10 mohm"),
    (24, 6): ("6 mohm", "340 A*h", "10 mohm"),
    (12, 2): ("4 mohm", "245 A*h", "7 mohm"),
}


def starter_text(system: int = 24, stages: int = 4) -> str:
    """The starter drawing's TOML text for a ``system`` [V] bus and ``stages`` coil stages."""
    if system not in _SYSTEMS:
        raise ValueError("system: 12 or 24 V")
    if stages not in STAGES[system]:
        raise ValueError(f"stages: {STAGES[system].start} to {STAGES[system].stop - 1} for a {system} V system")
    s = _SYSTEMS[system]
    main_type, main_rating, main_size = _MAIN[system][stages]
    rint, capacity, rint_high = _BANK.get((system, stages), (s.rint, s.capacity, s.rint_high))
    bank = "; a battery bank sized for this retarder" if (system, stages) in _BANK else ""
    main_length = "4 m" if system == 24 else "2.5 m"  # a 12 V feed must be short: its drop is a share of 12 V
    cutout = 30 if system == 24 else 15  # a retarder controller's overvoltage cut-out (invented)
    positions = "\n\n".join(
        f'[[switching.positions]]\nname = "{k}"  # position {k} of the hand control\n'
        f'at = "{0.2 * (k - 1):g} s"  # reached at this time of the switch-on sequence (invented)\n'
        "stages = [" + ", ".join(f'"S{j}"' for j in range(1, k + 1)) + "]" + "  # the stages on in this position"
        for k in range(1, stages + 1)
    )
    other = f"{s.relay_other}\n" if s.relay_other else ""
    out = [
        f"""# STARTER DRAWING — an INVENTED example written by `coilstage init`, not a real vehicle or product.
# A {system} V supply with a {stages}-stage retarder. Every figure marked (invented) was made up to be
# plausible: replace it with the installation's own data plates and datasheets before trusting a
# verdict. As written it checks without a FAIL:  coilstage check THIS_FILE
#
# Every quantity carries its unit ("35 mm^2", "2.4 m", "8 mohm", "85 degC"); a bare number where a
# unit belongs is an error. Keys marked (optional) may be deleted: the checker then states the
# default it used under "assumptions" in the report.
#
# Caution: a battery short drives thousands of amperes, retarder windings run well above 100 °C
# after a descent, and each stage stores joules that arc across a contact opened under load. Follow
# the vehicle maker's instructions and local rules; this file and its checks do not replace a
# qualified installer.

[drawing]
title = "Starter drawing, {system} V, {stages} stages (invented)"  # shown at the top of the report
note = "Edit every (invented) value."  # free text, shown under the title (optional)
format = 1  # drawing format version: 1

[supply]
system = "{system} V"  # nominal system voltage: "12 V" or "24 V"
code = "{s.code}"  # ISO 16750-2 supply code ({s.code_range}); or give [supply.limits] min and max
base_load = "{s.base_load}"  # the rest of the vehicle while braking, a constant current (invented)
negative = "B-"  # the battery negative node; the reference of the network (optional)
chassis = "B-"  # where a short to the body lands (optional; default: the negative node)
overvoltage_cutout = "{cutout} V"  # the retarder controller drops its stages above this bus (invented datasheet)
# load_dump_suppression = "not known"  # central load-dump suppression at the alternator: yes/no (optional)

[supply.battery]
emf = "{s.emf}"  # open-circuit voltage used in the hot corner (invented)
internal_resistance = "{rint}"  # the battery's internal resistance (invented{bank})
node = "B+"  # the battery positive node (optional; default "B+")
capacity = "{capacity}"  # rated capacity, for the charge drawn over the duty (optional; invented)
# chemistry = "flooded"  # "flooded", "agm" or "gel": its open-circuit voltage line and Peukert exponent (optional)
# cold_cranking_current = "{s.cca}"  # rated cold-cranking current of one 12 V battery (optional; invented)
# cranking_standard = "SAE J537"  # the test it is rated to: "SAE J537", "EN 50342-1", "DIN 43539-2", "IEC 60095-1"
# short_circuit_current = "{s.isc}"  # the maker's rated short-circuit current (optional; invented)
# peukert = 1.25  # Peukert exponent for the usable charge (optional; default by chemistry)

[supply.alternator]  # (optional: without it the battery alone feeds the bus)
setpoint = "{s.setpoint}"  # regulator set-point (invented)
tolerance = "{s.tolerance}"  # + tolerance of the set-point; the cold corner's bus is the sum (invented)
source_resistance = "{s.source_r}"  # the alternator and its cable as a source resistance (invented)
limit_idle = "{s.idle}"  # output current limit at engine idle (invented)
limit_rated = "{s.rated}"  # output current limit at rated speed (invented)
# node = "ALT"  # its own node, if it feeds through a cable of its own (default: the battery node)
# compensation_limit = "0.6 V"  # the most the temperature compensation moves the set-point (maker's figure)

[environment]
ambient_min = "-30 degC"  # lowest surrounding temperature: the cold corner (invented)
ambient_max = "40 degC"  # highest surrounding temperature (invented)
# rotor_zone_rise = "40 K"  # the rotors' heating of the coils' zone while retarding (optional; default 40 K)
# rotor_zone_time_constant = "10 min"  # how fast that rise comes and goes (optional; default 10 min)

[environment.zones]  # named places on the vehicle with their highest temperature (invented)
chassis_rail = "60 degC"  # along the frame rails, where the battery box and cables run
retarder_box = "70 degC"  # the relay box beside the retarder
retarder = "80 degC"  # around the stator coils, warmed by the rotors

[coils.RC]  # a coil type; stages name it (invented data plate)
metal = "copper"  # winding metal: "copper" or "aluminium"
resistance = "{s.coil_r}"  # one coil's resistance at the temperature it was measured at (invented)
inductance = "{s.inductance}"  # one coil's inductance (invented)
turns = {s.turns}  # turns of one coil (invented)
insulation_class = "H"  # IEC 60085 thermal class of the winding (H = 180 °C)
thermal_resistance = "{s.rth}"  # one coil to its surroundings, vehicle standing (optional; invented)
thermal_resistance_moving = "{s.rth_moving}"  # the same with the vehicle moving (optional; invented)
conductor_mass = "{s.conductor_mass}"  # copper of one coil: its heat capacity (optional; invented)
iron_mass = "{s.iron_mass}"  # pole and yoke iron heated with the coil (optional; invented)
iron_share = "50 %"  # the share of that iron's heat capacity that counts (optional)
zone = "retarder"  # the coil's surroundings: a zone above
# resistance_tolerance = "5 %"  # ± on this coil type's resistance (optional; default [tolerances] coil_resistance)
# inductance_tolerance = "20 %"  # ± on its inductance (optional; default [tolerances] coil_inductance)

[tolerances]  # (optional table) for the worst cases and the sweep; each one left out: the shipped default
# coil_resistance = "5 %"  # ± on every coil's resistance (default ±5 %)
# coil_inductance = "20 %"  # ± on every coil's inductance (default ±20 %)
# cable_length = {{ low = "0 %", high = "10 %" }}  # as routed over as drawn; or "0.3 m" (default 0 to +10 %)
# regulator_setpoint = "{s.tolerance}"  # ± of the set-point in V or % (the same as [supply.alternator] tolerance)
# regulator_compensation = "{s.compensation}"  # set-point change per kelvin of the regulator (default {s.compensation})
# fault_resistance = "5 mohm"  # the fault's own resistance for the smallest fault current (default 5 mohm)
# battery_state_of_charge = ["50 %", "100 %"]  # the battery's charge in service (default 50 % to 100 %)
# battery_resistance = ["{rint}", "{rint_high}"]  # in service, lowest to highest (default: derived)
# alternator_hot_derating = "25 %"  # output lost when the alternator is hot (default 15 % to 35 %)
# distribution = "uniform"  # how the sweep draws the values above: "uniform" or "normal"

[corners.hot]  # the hot corner (optional table)
alternator = "idle"  # the alternator at its idle output: "idle", "rated" or "off"

[duty]  # the heating duty (optional table)
profile = "endurance"  # shipped: "endurance" (about 12 min full retardation) or "continuous"
state_of_charge = "90 %"  # battery charge at the start of the descent (invented)
min_state_of_charge = "50 %"  # lowest acceptable charge at its end

[switching]  # switching of the stages (optional table)
release_limit = "0.5 s"  # longest acceptable time for the field to go after switch-off (invented)
cycles = 100000  # switchings over the fuses' life, for the pulse rule (invented)

{positions}

# ---------------------------------------------------------------- supply side
[[harness]]
id = "F-MAIN"  # every element has an id, a kind and two nodes
kind = "fuse"  # kinds: cable, ground, joint, busbar, fuse, relay, stage
from = "B+"  # the supply side
to = "F0"
type = "{main_type}"  # ISO 8820 fuse type
rating = "{main_rating}"  # rated current (invented)
voltage_rating = "58 V"  # the fuse's rated voltage (invented datasheet): above the bus's highest
breaking_capacity = "5 kA"  # from the fuse maker's datasheet (invented)
resistance = "0.15 mohm"  # the fuse's own resistance (optional; invented)
zone = "chassis_rail"  # where it sits

[[harness]]
id = "W-MAIN"
kind = "cable"
from = "F0"
to = "DIST"  # the distribution block
size = "{main_size}"  # conductor size: mm² (ISO 6722) or AWG
length = "{main_length}"  # the cable's length (invented)
insulation = "C"  # ISO 6722 temperature class (C = 125 °C)
zone = "chassis_rail"

[[harness]]
id = "W-RET"
kind = "ground"  # a return cable ("resistance" instead for a measured chassis path)
from = "GSTUD"  # the ground stud the stages return to
to = "B-"
size = "{main_size}"
length = "{main_length}"  # (invented)
insulation = "C"
zone = "chassis_rail"
"""
    ]
    for k in range(1, stages + 1):
        coil_note = (
            '# the coil table may add: suppression = "diode" (across the coil: "none", "diode", "diode_zener", '
            '"resistor", "varistor"), fuse = "5 A" (its feed fuse), wire_size = "1 mm^2" (its wire) (optional)\n'
            if k == 1
            else ""
        )
        length_note = (
            '# length_tolerance = "0.2 m"  # this cable\'s own length tolerance, in m or % (optional)\n'
            if k == 1
            else ""
        )
        branch_length = (2.0 + 0.3 * (k - 1)) if system == 24 else (1.0 + 0.2 * (k - 1))
        return_length = (1.2 if system == 24 else 0.8) + 0.2 * (k - 1)
        out.append(
            f"""
# ---------------------------------------------------------------- stage {k}
[[harness]]
id = "F{k}"
kind = "fuse"
from = "DIST"
to = "K{k}.30"  # DIN 72552 terminal 30 of the contactor
type = "{s.branch_fuse_type}"
rating = "{s.branch_fuse}"  # (invented)
voltage_rating = "{s.branch_fuse_v}"  # (invented datasheet)
breaking_capacity = "{s.branch_fuse_bc}"  # (invented datasheet)
melting_i2t = "{s.branch_fuse_i2t}"  # melting I²t, for its time-current and cyclic duty (invented datasheet)
resistance = "0.3 mohm"  # (optional; invented)
# cyclic_factor = "45 %"  # the maker's cyclic derating, judged instead of the shipped default (optional)
# cyclic_cycles = 100000  # the switchings that derating is rated for (optional, with cyclic_factor)
zone = "retarder_box"

[[harness]]
id = "K{k}"
kind = "relay"  # the stage's contactor
from = "K{k}.30"
to = "K{k}.87"  # DIN 72552 terminal 87
{s.relay_key} = "{s.relay_rating}"  # contact rating at the system voltage (invented datasheet)
{other}rated_ambient = "25 degC"  # the temperature the ratings apply at (invented datasheet)
derating = "80 % @ 85 degC"  # share of the rating left at that temperature (invented datasheet)
voltage_rating = "{s.relay_voltage}"  # highest switching voltage (invented datasheet)
coil = {s.relay_coil}  # the contactor's coil, for the pick-up check (invented)
{coil_note}resistance = "0.5 mohm"  # contact resistance (optional; invented)
zone = "retarder_box"

[[harness]]
id = "W{k}"
kind = "cable"
from = "K{k}.87"
to = "S{k}+"
size = "{s.branch_size}"
length = "{branch_length:.1f} m"  # (invented)
{length_note}insulation = "C"
zone = "chassis_rail"

[[harness]]
id = "S{k}"
kind = "stage"  # a coil stage
coil = "RC"  # its coil type, from [coils]
count = 2  # coils in the stage
connection = "parallel"  # "series" or "parallel"
suppression = {s.suppression}
# suppression: {s.suppression_note} (invented ratings)
from = "S{k}+"
to = "S{k}-"

[[harness]]
id = "W{k}R"
kind = "ground"
from = "S{k}-"
to = "GSTUD"
size = "{s.branch_size}"
length = "{return_length:.1f} m"  # (invented)
insulation = "C"
zone = "chassis_rail"
"""
        )
    out.append(_JOINT_EXAMPLE)
    return _align("".join(out))


#: a commented joint: uncommented, it sits between the ground stud and the main return
_JOINT_EXAMPLE = """
# ---------------------------------------------------------------- a joint (optional element)
# A lug, stud, splice, connector or fuse holder as an element of its own. To use it, remove the
# leading "# " of the lines below and start W-RET at "GSTUD-LUG" instead of "GSTUD".
# [[harness]]
# id = "J-RET"
# kind = "joint"
# joint = "lug"  # "lug", "stud", "splice", "connector" or "fuse_holder"
# from = "GSTUD"
# to = "GSTUD-LUG"
# resistance = "0.05 mohm"  # (default for a lug: 0.05 mohm, a sound new ring lug on a stud; invented)
# rating = "250 A"  # continuous current at rated_ambient (invented datasheet)
# rated_ambient = "30 degC"  # the temperature the rating applies at (default 23 degC)
# derating = "80 % @ 85 degC"  # share of the rating left at that temperature (invented datasheet)
# zone = "chassis_rail"  # where it sits
# conductor_range = ["70 mm^2", "95 mm^2"]  # the conductors the lug takes (invented datasheet)
# cable = "W-RET"  # the cable the lug terminates
"""

_COMMENTED = re.compile(r"^(\S.*?\S)\s{2,}(# .*)$")
#: a key left commented out for the reader to take up: ``# key = value  # comment``
_COMMENTED_KEY = re.compile(r"^# [A-Za-z_][\w.]* = ")
#: the column the comments of the starter line up at
COMMENT_COLUMN = 48


def _align(text: str) -> str:
    """Line up the trailing comments of ``key = value  # comment`` lines."""
    out = []
    for line in text.splitlines():
        m = _COMMENTED.match(line)
        if m and (not line.startswith("#") or _COMMENTED_KEY.match(line)):
            left, comment = m.groups()
            line = f"{left:<{COMMENT_COLUMN - 1}} {comment}" if len(left) < COMMENT_COLUMN - 1 else f"{left}  {comment}"
        out.append(line)
    return "\n".join(out) + "\n"


def _system(text: str) -> int:
    m = re.fullmatch(r"\s*(12|24)\s*(?:V)?\s*", text, re.IGNORECASE)
    if not m:
        raise argparse.ArgumentTypeError('expected "12V" or "24V"')
    return int(m.group(1))


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("--system", type=_system, default=24, metavar="12V|24V", help="system voltage (24V)")
    p.add_argument("--stages", type=int, default=4, metavar="N", help="number of coil stages (4)")
    p.add_argument("--output", "-o", required=True, metavar="DRAWING", help="the drawing to write (TOML)")
    p.add_argument("--force", action="store_true", help="replace DRAWING if it exists")


def run(args: argparse.Namespace) -> int:
    from coilstage.drawing.load import parse_drawing
    from coilstage.errors import DrawingError
    from coilstage.wirelist import write_atomic

    system = args.system if isinstance(args.system, int) else _system(str(args.system))
    if args.stages not in STAGES[system]:
        r = STAGES[system]
        print(f"coilstage: --stages: expected {r.start} to {r.stop - 1} for a {system} V system", file=sys.stderr)
        return EXIT_BAD_INPUT
    out = Path(args.output)
    if out.exists() and not getattr(args, "force", False):
        print(f"coilstage: {out} exists; choose another name (or --force to replace it)", file=sys.stderr)
        return EXIT_BAD_INPUT
    text = starter_text(system, args.stages)
    try:
        parse_drawing(text, str(out), out.parent)
    except DrawingError as exc:  # a bug of this module: say so, write nothing
        print(f"coilstage: internal error: the starter does not load ({exc})", file=sys.stderr)
        return 3
    write_atomic(out, text)
    print(
        f"coilstage: wrote {out}: a {system} V, {args.stages}-stage starter; edit every (invented) value",
        file=sys.stderr,
    )
    return EXIT_OK

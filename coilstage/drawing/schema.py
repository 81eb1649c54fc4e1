"""The drawing as the program holds it: frozen dataclasses of SI floats (temperatures in °C).

A Drawing is made only by :mod:`coilstage.drawing.load`, which has already checked every value,
resolved every table look-up and recorded every default it applied in ``Drawing.assumptions``.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any, TypeVar

_T = TypeVar("_T")


def evolve(obj: _T, **changes: Any) -> _T:
    """A copy of the frozen dataclass ``obj`` with ``changes`` to its fields: what
    :func:`dataclasses.replace` gives, without running ``__init__`` again (about a tenth of its cost;
    the analysis makes thousands of such copies, one per element and ambient of a sweep). Only for
    classes whose fields hold everything (no ``__post_init__``, no cached or derived attributes): those
    of this module, as tests/test_schema_evolve.py holds. Raises TypeError on a name that is no field."""
    names = obj.__dataclass_fields__  # type: ignore[attr-defined]
    for k in changes:
        if k not in names:
            raise TypeError(f"{type(obj).__name__} has no field {k!r}")
    new = object.__new__(type(obj))
    new.__dict__.update(obj.__dict__)
    new.__dict__.update(changes)
    return new


@dataclass(frozen=True)
class Battery:
    emf: float  # open-circuit voltage as stated [V]
    internal_resistance: float  # [Ω]
    node: str
    capacity: float | None = None  # [C] (A·h × 3600)
    #: flooded | agm | gel (open-circuit voltage line and resistance rise); where the drawing leaves it out,
    #: the supply.battery.chemistry row of data/drawing_defaults.toml (always set by the loader)
    chemistry: str = field(kw_only=True)
    cranking_current: float | None = None  # rated cold-cranking current of one 12 V block [A] (bounds R)
    short_circuit_current: float | None = None  # maker's rated short-circuit current [A]
    peukert: float | None = None  # Peukert exponent for usable charge; None: the shipped default
    #: the test cranking_current is rated to (physics.battery.CRANKING_TESTS); default: the
    #: supply.battery.cranking_standard row (always set by the loader)
    cranking_standard: str = field(kw_only=True)


@dataclass(frozen=True)
class Alternator:
    setpoint: float  # regulation set-point [V]
    tolerance: float  # + tolerance of the set-point [V]
    source_resistance: float  # [Ω]
    limit_idle: float  # output current limit at engine idle [A]
    limit_rated: float  # output current limit at rated speed [A]
    node: str
    #: the most the regulator's temperature compensation moves its set-point either way [V] (the
    #: regulator maker's figure; None: linear over the whole temperature range)
    compensation_limit: float | None = None


@dataclass(frozen=True)
class Supply:
    system_voltage: int  # 12 or 24 [V]
    code: str | None  # ISO 16750-2 supply voltage code
    v_min: float  # lowest operating voltage [V]
    v_max: float  # highest operating voltage [V]
    limits_source: str  # where v_min/v_max come from
    battery: Battery
    alternator: Alternator | None
    base_load: float  # rest of the vehicle, constant current [A]
    base_load_node: str
    negative_node: str
    chassis_node: str  # where a short to the vehicle body lands
    #: central load-dump suppression at the alternator: "yes", "no" or "not known" (ISO 16750-2 Test B / A);
    #: default: the supply.load_dump_suppression row (always set by the loader)
    load_dump_suppression: str = field(kw_only=True)
    #: the bus voltage above which the retarder's controller switches its stages off (its supply
    #: protection) [V]; None: the drawing states none, so the stages stay on in a regulator failure
    overvoltage_cutout: float | None = None


@dataclass(frozen=True)
class Environment:
    ambient_min: float  # [°C]
    ambient_max: float  # [°C]
    zones: dict[str, float]  # zone name -> highest temperature [°C]
    #: the retarder's surroundings heated by its rotors over a retardation: the coils' zone rises by
    #: up to ``rotor_zone_rise`` [K] with time constant ``rotor_zone_time_constant`` [s] while any stage
    #: is on, and falls back with the same constant; None: the shipped default (analysis/duty)
    rotor_zone_rise: float | None = None
    rotor_zone_time_constant: float | None = None


@dataclass(frozen=True)
class MagneticSpec:
    """A coil's pole circuit as the drawing gives it (see :mod:`coilstage.physics.magnetic`)."""

    pole_area: float  # [m²]
    gaps: int
    gap: float  # each [m]
    iron_length: float  # [m]
    iron_area: float  # [m²]
    curve_name: str
    curve_h: tuple[float, ...]  # [A/m]; empty for a shipped analytic curve
    curve_b: tuple[float, ...]  # [T]
    curve_source: str


@dataclass(frozen=True)
class Retarder:
    rated_torque: float | None = None  # [N·m] with all stages at rated_current
    rated_current: float | None = None  # stage current at the rated torque [A]
    critical_speed: float | None = None  # [rad/s]
    min_braking_ratio: float | None = None  # hot/cold braking effort that must remain


@dataclass(frozen=True)
class ACComparison:
    voltage: float  # RMS [V]
    frequency: float  # [Hz]


@dataclass(frozen=True)
class CoilType:
    name: str
    metal: str  # "copper" | "aluminium"
    alpha20: float  # [K⁻¹]
    r_ref: float  # [Ω]
    t_ref: float  # [°C]
    inductance: float  # [H]
    turns: int
    insulation_class: int  # IEC 60085 class [°C]
    class_allowance: float  # hot-spot allowance [K]
    hot_temperature: float  # winding temperature for the hot corner [°C] (a stated or default one)
    hot_temperature_source: str
    resistance_source: str
    thermal_resistance: float | None = None  # winding to its surroundings, standing [K/W]
    thermal_resistance_moving: float | None = None  # the same with the vehicle moving [K/W]
    heat_capacity: float | None = None  # [J/K]
    heat_capacity_source: str = ""
    zone: str = "ambient"
    #: surroundings of the winding [°C]: the zone's temperature, or the highest ambient where the drawing
    #: names no zone (always set by the loader, so no default here)
    zone_temperature: float = field(kw_only=True)
    magnetic: MagneticSpec | None = None

    @property
    def limit_temperature(self) -> float:
        """Highest average winding temperature: the class less its hot-spot allowance [°C]."""
        return self.insulation_class - self.class_allowance

    @property
    def has_thermal_model(self) -> bool:
        return self.thermal_resistance is not None and self.heat_capacity is not None


@dataclass(frozen=True)
class Suppression:
    """What takes a stage's current when its contact opens: a suppressor across the coil.

    The suppressor holds ``u0 + r_series·i`` while it conducts (a diode: its forward voltage; a
    diode and zener: zener + forward voltage; a TVS or varistor: its clamp voltage; a diode and
    resistor: the forward voltage and the resistor). ``kind == "none"``: the contact arcs.
    """

    kind: str  # none | diode | diode_zener | diode_resistor | tvs | varistor
    u0: float  # [V]
    r_series: float  # [Ω]
    peak_current: float | None  # rated peak (surge) current [A]
    reverse_voltage: float | None  # diode V_RRM, or TVS stand-off / varistor continuous voltage [V]
    energy_rating: float | None  # energy per event [J]

    @property
    def bidirectional(self) -> bool:
        """A TVS pair or varistor conducts either way: it sits across the coil in normal service too."""
        return self.kind in ("tvs", "varistor")


@dataclass(frozen=True)
class RelayCoil:
    voltage: float  # nominal coil voltage [V]
    r_ref: float  # coil resistance [Ω] at t_ref
    t_ref: float  # [°C]
    operate_voltage: float  # must-operate voltage at t_ref [V]
    feed_resistance: float  # control wiring and switch between the bus and the coil [Ω]
    rise: float  # coil temperature above its zone in service [K]
    #: the coil circuit: its own suppression ("none" | "diode" | "diode_zener" | "resistor" | "varistor";
    #: a plain diode slows the armature's opening several times), its feed fuse rating [A] and its
    #: wire's conducting area [m²] (None: not stated)
    suppression: str = field(kw_only=True)  # default: the relay.coil.suppression row (always set by the loader)
    fuse_rating: float | None = None
    wire_area: float | None = None


@dataclass(frozen=True)
class Position:
    """A position of the driver's control: from ``at`` [s] on, exactly ``stages`` are energised."""

    name: str
    at: float
    stages: tuple[str, ...]


@dataclass(frozen=True)
class Switching:
    positions: tuple[Position, ...]  # empty: the drawing gives no sequence
    duration: float  # simulated span of each switching scenario [s]
    off_at: float  # when the scenarios switch everything off [s]
    release_limit: float | None  # longest acceptable release time [s]
    release_fraction: float  # release = current down to this fraction of the break current
    cycles: int  # switchings over the fuses' life (pulse rule)


@dataclass(frozen=True)
class DutyStep:
    duration: float  # [s]
    stages: tuple[str, ...]  # energised during the step
    engine: str  # "idle" | "driving"
    moving: bool
    label: str


@dataclass(frozen=True)
class Duty:
    name: str  # the shipped profile's name, or "drawing"
    description: str
    steps: tuple[DutyStep, ...]
    start_soc: float  # battery state of charge at the start, fraction
    min_soc: float  # lowest acceptable state of charge, fraction

    @property
    def duration(self) -> float:
        return sum(s.duration for s in self.steps)


@dataclass(frozen=True)
class Element:
    """Anything in the harness between two named nodes; current is counted from ``a`` to ``b``
    (``from`` is the supply side)."""

    id: str
    kind: str
    a: str
    b: str
    where: str  # TOML path, e.g. "harness[3]"


@dataclass(frozen=True)
class Cable(Element):
    size_label: str
    area: float  # conducting cross-section [m²]
    awg: int | None  # gauge number where the size is an AWG size (0 = 1/0 … −3 = 4/0)
    length: float  # [m]
    r20_per_m: float  # [Ω/m] at 20 °C
    r20_source: str
    alpha20: float
    material: str
    insulation_class: str  # ISO 6722 class letter
    class_max: float  # [°C]
    zone: str
    zone_temperature: float  # [°C]
    bundle: int
    role: str  # "feed" or "return"
    sheathed: bool
    conductor_diameter: float | None = None  # [m], for the heat balance
    outer_diameter: float | None = None  # [m]
    diameter_source: str = ""
    insulation_material: str = ""  # key of insulation_materials.toml; "" = the ISO 6722 class's default


@dataclass(frozen=True)
class Fuse(Element):
    fuse_type: str
    part: str
    rating: float  # [A]
    voltage_rating: float  # [V]
    breaking_capacity: float  # [A]
    breaking_source: str
    series: tuple[float, ...]  # standard ratings of the type [A], may be empty
    zone: str
    zone_temperature: float
    resistance: float  # [Ω]
    protects: tuple[str, ...] | None  # cable ids; None: found from the topology
    gates: tuple[tuple[float, float, float], ...] | None = None  # (multiple, t_min, t_max); None: shipped
    gates_source: str = ""
    melting_i2t: float | None = None  # [A²·s]
    cyclic_factor: float | None = None  # maker's cyclic derating B'2 [-]; None: the shipped default
    cyclic_cycles: int | None = None  # switchings the maker's factor is rated for; None: not stated


@dataclass(frozen=True)
class Relay(Element):
    rating_12v: float | None  # contact rating at 12 V systems [A]
    rating_24v: float | None  # contact rating at 24 V systems [A]
    rated_ambient: float  # temperature the ratings apply at [°C]
    derated: tuple[float, float] | None  # (rating fraction, at temperature [°C]) for the system's rating
    max_ambient: float | None  # highest permitted surrounding temperature [°C]
    voltage_rating: float | None  # highest switching voltage [V]
    zone: str
    zone_temperature: float
    resistance: float  # contact resistance [Ω]
    categories: tuple[str, ...] = ()  # rated DC utilization categories (IEC 60947)
    inductive_break: tuple[float, float] | None = None  # rated break current [A] at a time constant [s]
    coil: RelayCoil | None = None
    category_ratings: tuple[tuple[str, float, float], ...] = ()  # (category, I_e [A], U_e [V]) as rated


@dataclass(frozen=True)
class Resistor(Element):
    """A joint, busbar, or a measured chassis ground path: a fixed resistance."""

    resistance: float  # [Ω]


@dataclass(frozen=True)
class Joint(Resistor):
    """A ``kind = "joint"`` element: a lug, stud, splice, connector or fuse holder, a resistance with a
    current rating. It is a :class:`Resistor` (the network stamps its ``resistance`` like any fixed
    resistance, and every list of joints and busbars shows it).

    ``joint_kind``: lug | stud | splice | connector | fuse_holder, or "" where the drawing does not say.
    ``rating`` is the continuous current at ``rated_ambient`` [°C]; ``derated`` (fraction, at
    temperature [°C]) where the maker gives one; ``zone``/``zone_temperature`` its surroundings (the
    highest ambient where the drawing names no zone); ``part`` the parts-library reference it came from
    ("file.toml#NAME", "" where typed in); for a lug, ``conductor_range`` is the smallest and
    largest conductor area it takes [m²] and ``cable`` the id of the cable it terminates."""

    joint_kind: str
    rating: float | None  # [A]
    rated_ambient: float  # [°C]; where the drawing leaves it out, data/drawing_defaults.toml joint.rated_ambient
    derated: tuple[float, float] | None
    zone: str
    zone_temperature: float  # [°C]
    part: str = ""
    conductor_range: tuple[float, float] | None = None  # [m²]
    cable: str | None = None  # id of the cable a lug terminates


@dataclass(frozen=True)
class ToleranceSpec:
    """A tolerance or operating range the drawing states for one key of the tolerance defaults
    (``coilstage/data/tolerance_defaults.toml``), or for one element (``cables.W3.length_tolerance``).

    ``low``/``high`` in the default row's unit (relative tolerances as fractions: an absolute cable
    length tolerance is stored per cable as a fraction of its length, a set-point tolerance in volts
    as a fraction of the set-point); ``where`` is the drawing key it came from."""

    low: float
    high: float
    distribution: str = "uniform"  # uniform | normal (ends are ±3 sigma)
    where: str = ""


@dataclass(frozen=True)
class Stage(Element):
    coil: CoilType
    count: int
    connection: str  # "series" | "parallel"
    suppression: Suppression = Suppression("none", 0.0, 0.0, None, None, None)

    @property
    def r_factor(self) -> float:
        """Stage resistance / one coil's resistance."""
        return float(self.count) if self.connection == "series" else 1.0 / self.count

    @property
    def coil_current_factor(self) -> float:
        """Current in one coil / stage current."""
        return 1.0 if self.connection == "series" else 1.0 / self.count

    @property
    def inductance(self) -> float:
        """Stage inductance [H], coils uncoupled."""
        return self.coil.inductance * self.r_factor


@dataclass(frozen=True)
class CornerSettings:
    """The operating corners, each value already resolved (defaults applied)."""

    cold_ambient: float  # [°C]
    cold_bus: float  # [V]
    hot_battery_emf: float  # [V]
    hot_alternator: str  # "idle" | "rated" | "off"
    limit_bus: float  # [V]


@dataclass(frozen=True)
class Limits:
    drop_pass: float  # fraction of nominal system voltage
    drop_warn: float
    #: the defaults of these three are rows of data/drawing_defaults.toml (limits.max_stages, ...)
    max_stages: int  # largest drawing analysed ([limits] max_stages)
    max_elements: int  # ([limits] max_elements)
    max_duty: float  # longest duty or descent simulated [s] ([limits] max_duty)


@dataclass(frozen=True)
class DrawingInfo:
    """Who and what a drawing is for, as its ``[drawing]`` table says (all optional free text)."""

    revision: str = ""
    author: str = ""
    vehicle: str = ""  # fleet number or VIN
    note: str = ""


@dataclass(frozen=True)
class Drawing:
    title: str
    note: str
    path: str
    supply: Supply
    environment: Environment
    coils: dict[str, CoilType]
    elements: tuple[Element, ...]
    corners: CornerSettings
    limits: Limits
    switching: Switching  # where [switching] leaves a key out, its row of data/drawing_defaults.toml
    duty: Duty | None = None
    retarder: Retarder = Retarder()
    ac_comparison: ACComparison | None = None
    assumptions: tuple[str, ...] = field(default_factory=tuple)
    info: DrawingInfo = DrawingInfo()
    #: where values came from a parts library (parts_library.Provenance), one per element or suppression table
    provenance: tuple[Any, ...] = field(default_factory=tuple)
    #: ids of the harness elements marked ``fixed = true`` (sizing keeps them as they are)
    fixed: frozenset[str] = frozenset()
    #: element id -> the keys (relative to the element, e.g. "resistance", "coil.rise") the loader filled
    #: with a default because the drawing left them out
    defaults_applied: Mapping[str, frozenset[str]] = field(default_factory=dict)
    #: tolerances and ranges the drawing states (``[tolerances]`` and per-element keys), by default-row key
    #: or per-element key; what it leaves out comes from the shipped defaults (analysis/tolerances)
    tolerances: Mapping[str, ToleranceSpec] = field(default_factory=dict)

    def of_kind(self, cls: type) -> list:
        return [e for e in self.elements if isinstance(e, cls)]

    @property
    def stages(self) -> list[Stage]:
        return self.of_kind(Stage)

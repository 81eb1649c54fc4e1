"""The ``[supply]`` section: system voltage, supply code or limits, battery, alternator, base load."""

from __future__ import annotations

from coilstage import tables
from coilstage.physics.battery import CRANKING_TESTS
from coilstage.units import gate

from .defaults import default
from .reader import MISSING, Reader
from .schema import (
    Alternator,
    Battery,
    Supply,
)

#: key path -> the keys allowed there
KEYS = {
    "supply": {
        "alternator",
        "base_load",
        "base_load_node",
        "battery",
        "chassis",
        "code",
        "limits",
        "load_dump_suppression",
        "negative",
        "overvoltage_cutout",
        "system",
    },
    "supply.limits": {"max", "min"},
    "supply.battery": {
        "capacity",
        "chemistry",
        "cold_cranking_current",
        "cranking_standard",
        "emf",
        "internal_resistance",
        "node",
        "peukert",
        "short_circuit_current",
    },
    "supply.alternator": {
        "compensation_limit",
        "limit_idle",
        "limit_rated",
        "node",
        "setpoint",
        "source_resistance",
        "tolerance",
    },
}


#: battery chemistries (the open-circuit voltage line and the Peukert exponent follow it)
CHEMISTRIES = ("flooded", "agm", "gel")
#: central load-dump suppression at the alternator (ISO 16750-2 Test B applies with it, Test A without)
LOAD_DUMP_SUPPRESSION = ("yes", "no", "not known")
#: Peukert exponents read: 1 is an ideal battery; published lead-acid ranges end at 1.6.
PEUKERT_RANGE = (1.0, 2.0)


def _peukert(value) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ValueError("a Peukert exponent as a plain number, e.g. 1.25")
    lo, hi = PEUKERT_RANGE
    if not lo <= float(value) <= hi:
        raise ValueError(f"a Peukert exponent from {lo:g} to {hi:g}, e.g. 1.25")
    return gate(float(value), "ratio")


def read_supply(r: Reader, raw: dict) -> Supply | None:
    s = r.table(raw, "supply", "supply")
    if s is None:
        return None
    r.unknown(s, KEYS["supply"], "supply")
    system = r.quantity(s, "system", "supply", "voltage")
    if system is not None and round(system) not in (12, 24):
        r.problem("supply.system", s["system"], '"12 V" or "24 V"')
        system = None
    negative = r.text(s, "negative", "supply", default=default("supply.negative"))
    chassis = r.text(s, "chassis", "supply", default=negative)

    b = r.table(s, "battery", "supply.battery")
    battery = None
    if b is not None:
        r.unknown(b, KEYS["supply.battery"], "supply.battery")
        emf = r.quantity(b, "emf", "supply.battery", "voltage", positive=True)
        rint = r.quantity(b, "internal_resistance", "supply.battery", "resistance", positive=True)
        node = r.text(b, "node", "supply.battery", default=default("supply.battery.node"))
        cap = r.quantity(b, "capacity", "supply.battery", "charge", default=None, positive=True)
        chem = r.text(b, "chemistry", "supply.battery", default=None, choices=list(CHEMISTRIES))
        cca = r.quantity(b, "cold_cranking_current", "supply.battery", "current", default=None, positive=True)
        isc = r.quantity(b, "short_circuit_current", "supply.battery", "current", default=None, positive=True)
        peukert = r.value(b, "peukert", "supply.battery", _peukert, default=None)
        standard = r.text(b, "cranking_standard", "supply.battery", default=None, choices=list(CRANKING_TESTS))
        if "cranking_standard" in b and "cold_cranking_current" not in b:
            r.problem("supply.battery.cranking_standard", b["cranking_standard"], "a cold_cranking_current beside it")
        bad = any(
            k in b
            for k, v in (
                ("chemistry", chem),
                ("cold_cranking_current", cca),
                ("short_circuit_current", isc),
                ("peukert", peukert),
                ("cranking_standard", standard),
            )
            if v is None
        )
        if None not in (emf, rint, node) and not bad:
            battery = Battery(
                emf,
                rint,
                node,
                cap,
                chemistry=chem or default("supply.battery.chemistry"),
                cranking_current=cca,
                short_circuit_current=isc,
                peukert=peukert,
                cranking_standard=standard or default("supply.battery.cranking_standard"),
            )

    alternator = None
    a = r.table(s, "alternator", "supply.alternator", required=False)
    if a is not None:
        r.unknown(a, KEYS["supply.alternator"], "supply.alternator")
        setpoint = r.quantity(a, "setpoint", "supply.alternator", "voltage", positive=True)
        tol = r.quantity(a, "tolerance", "supply.alternator", "voltage", default=None, nonnegative=True)
        if tol is None and "tolerance" not in a:
            tol = default("supply.alternator.tolerance")
            r.assume("supply.alternator.tolerance not given: the cold corner uses the set-point itself")
        rs = r.quantity(a, "source_resistance", "supply.alternator", "resistance", positive=True)
        idle = r.quantity(a, "limit_idle", "supply.alternator", "current", positive=True)
        rated = r.quantity(a, "limit_rated", "supply.alternator", "current", positive=True)
        node = r.text(
            a, "node", "supply.alternator", default=battery.node if battery else default("supply.battery.node")
        )
        if idle is not None and rated is not None and idle > rated:
            r.problem("supply.alternator.limit_idle", a["limit_idle"], "no more than limit_rated")
        clamp = r.quantity(a, "compensation_limit", "supply.alternator", "voltage", default=None, nonnegative=True)
        if "compensation_limit" not in a:
            r.assume(
                "supply.alternator.compensation_limit not given: the regulator's temperature compensation is "
                "taken as linear over the whole regulator temperature range (give the maker's limit)"
            )
        if None not in (setpoint, tol, rs, idle, rated, node) and (clamp is not None or "compensation_limit" not in a):
            alternator = Alternator(setpoint, tol, rs, idle, rated, node, clamp)
    elif "alternator" not in s:
        r.assume("no alternator in the drawing: the battery alone feeds the bus")

    suppression = r.text(s, "load_dump_suppression", "supply", default=None, choices=list(LOAD_DUMP_SUPPRESSION))
    cutout = r.quantity(s, "overvoltage_cutout", "supply", "voltage", default=None, positive=True)

    base = r.quantity(s, "base_load", "supply", "current", default=None, nonnegative=True)
    if base is None and "base_load" not in s:
        base = default("supply.base_load")
        r.assume("supply.base_load not given: the rest of the vehicle draws nothing")
    base_node = r.text(
        s, "base_load_node", "supply", default=battery.node if battery else default("supply.battery.node")
    )

    code = None
    v_min = v_max = None
    limits_source = ""
    if "code" in s:
        code = r.text(s, "code", "supply", choices=sorted(tables.supply_codes()))
        if code is not None:
            row = tables.supply_codes()[code]
            if system is not None and row["system"] != round(system):
                fits = sorted(k for k, v in tables.supply_codes().items() if v["system"] == round(system))
                r.problem("supply.code", code, f"a code for a {round(system)} V system: one of {', '.join(fits)}")
            v_min, v_max = float(row["min"]), float(row["max"])
            limits_source = f"ISO 16750-2:2010 code {code}"
    lim = r.table(s, "limits", "supply.limits", required=False)
    if lim is not None:
        r.unknown(lim, KEYS["supply.limits"], "supply.limits")
        lo = r.quantity(lim, "min", "supply.limits", "voltage", positive=True)
        hi = r.quantity(lim, "max", "supply.limits", "voltage", positive=True)
        if lo is not None and hi is not None:
            if lo >= hi:
                r.problem("supply.limits.min", lim["min"], "a minimum below the maximum")
            v_min, v_max = lo, hi
            limits_source = "supply.limits in the drawing"
    if v_min is None and "code" not in s and lim is None:
        r.problem("supply", MISSING, 'an ISO 16750-2 supply code (code = "F") or [supply.limits] min and max')
    if None in (system, battery, base, base_node, negative, v_min, v_max) or (
        suppression is None and "load_dump_suppression" in s
    ):
        return None
    if battery.node == negative:
        r.problem("supply.battery.node", battery.node, "a node other than the negative node")
        return None
    if cutout is not None and cutout <= system:
        r.problem("supply.overvoltage_cutout", s["overvoltage_cutout"], f"a voltage above the {round(system)} V system")
        return None
    return Supply(
        round(system),
        code,
        v_min,
        v_max,
        limits_source,
        battery,
        alternator,
        base,
        base_node,
        negative,
        chassis or negative,
        load_dump_suppression=suppression or default("supply.load_dump_suppression"),
        overvoltage_cutout=cutout,
    )

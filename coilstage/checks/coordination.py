"""Overload coordination between a fuse and the cables it protects, IEC 60364-4-43:2008 clause 433.1:

    I_B <= I_n <= I_Z   and   I_2 <= 1.45 * I_Z

I_B the design current (the duty current through the fuse, at its largest-current worst case where
the worst cases were computed), I_n the fuse's rating, I_Z the ampacity of the weakest cable it
protects in its zone and bundle, I_2 the current that ensures the fuse operates within its
conventional time. This stands beside ``fuse.protects_cable`` (ABYC E-11): every fuse is judged by
both sources, and where they disagree the note says what the other found.
"""

from __future__ import annotations

from coilstage import tables
from coilstage.analysis.run import Analysis
from coilstage.checks.base import Rule, Status, Verdict, not_checked
from coilstage.checks.protection import FUSE_PROTECTS
from coilstage.drawing.schema import Cable, Fuse

_TABLE = "coordination_iec60364-4-43.toml"


def coordination_table() -> dict:
    return tables.shipped(_TABLE)["table"]


def conventional_factor(f: Fuse) -> tuple[float, str]:
    """k2 = I_2 / I_n of the fuse, with words: from its own gates (the lowest multiple at which it must
    open within its family's conventional time) where the drawing gives them, else the shipped row of
    its family (ISO 8820 road-vehicle fuse-links for every ISO 8820 type, gG by rating otherwise)."""
    tab = coordination_table()
    rows = tab["rows"]
    if f.fuse_type in tables.fuse_types():
        row = next(r for r in rows if r["family"] == "road-vehicle fuse-link")
    else:
        gg = [r for r in rows if r["family"].startswith("gG") and f.rating <= r["i_max"]]
        if not gg:
            return float("nan"), f"no conventional operating current known for type {f.fuse_type}"
        row = gg[0]
    if f.gates:
        opened = [m for m, _tmin, tmax in f.gates if tmax <= row["time"]]
        if opened:
            k2 = min(opened)
            return k2, (
                f"I2 = {k2:g} x In: the lowest of the fuse's stated gates ({f.gates_source or 'drawing'}) "
                f"at which it must open within {row['time'] / 60:g} min"
            )
    return float(row["operating"]), (
        f"I2 = {row['operating']:g} x In, the conventional operating current of {row['family']} "
        f"({row['standard']}; {row['status']})"
    )


def _abyc_words(v: Verdict | None) -> tuple[Status | None, str]:
    if v is None:
        return None, "ABYC E-11 (fuse.protects_cable) gave no verdict"
    if v.status is Status.NOT_CHECKED or v.value is None or v.limit is None:
        return v.status, f"ABYC E-11 (fuse.protects_cable): {v.status.value}"
    # both sources' figures side by side: the ABYC verdict's own comparison and its reason
    reason = v.note.split(" (protects")[0].split("; ")[0]
    return v.status, (
        f"ABYC E-11 (fuse.protects_cable): {v.status.value}, rating {v.value:g} A against {v.limit:.1f} A ({reason})"
    )


def _coordination(a: Analysis) -> list[Verdict]:
    tab = coordination_table()
    factor = float(tab["factor"])
    abyc = {v.subject: v for v in FUSE_PROTECTS.evaluate(a)}
    cables = {c.id: c for c in a.drawing.of_kind(Cable)}
    out = []
    for f in a.drawing.of_kind(Fuse):
        ids = [i for i in a.protected.get(f.id, []) if i in cables]
        if not ids:
            out.append(not_checked(FUSE_COORDINATION, f.id, "no cable found that this fuse protects", "A"))
            continue
        amps = []
        for cid in ids:
            amp = a.ratings.cables[cid].ampacity
            if isinstance(amp, str):
                break
            amps.append((amp.value, cid))
        else:
            amp = None
        if amp is not None:
            out.append(not_checked(FUSE_COORDINATION, f.id, f"ampacity of {cid} unknown: {amp}", "A"))
            continue
        iz, cid = min(amps)
        ib, ib_words = a.worst.largest_current[f.id], "largest-current worst case"
        k2, k2_words = conventional_factor(f)
        if k2 != k2:  # NaN: no conventional current for this type
            out.append(not_checked(FUSE_COORDINATION, f.id, k2_words, "A"))
            continue
        i_n = f.rating
        i2 = k2 * i_n
        conditions = [
            ("I_B <= I_n", ib, i_n, f"design current {ib:.1f} A ({ib_words}) against the {i_n:g} A rating"),
            ("I_n <= I_Z", i_n, iz, f"rating {i_n:g} A against the {iz:.1f} A ampacity of {cid}"),
            (
                f"I_2 <= {factor:g} x I_Z",
                i2,
                factor * iz,
                f"I2 {i2:.1f} A against {factor:g} x {iz:.1f} A = {factor * iz:.1f} A",
            ),
        ]
        failed = [c for c in conditions if c[1] > c[2]]
        # the deciding condition: the first failed one, else the one with the least headroom
        name, value, limit, words = failed[0] if failed else min(conditions, key=lambda c: (c[2] - c[1]) / c[2])
        status = Status.FAIL if failed else Status.PASS
        abyc_status, abyc_words = _abyc_words(abyc.get(f.id))
        if abyc_status is None or abyc_status is Status.NOT_CHECKED:
            agree = f"{abyc_words}"
        elif (abyc_status is Status.FAIL) == (status is Status.FAIL):
            agree = f"{abyc_words}, the same conclusion"
        else:
            agree = (
                f"the sources disagree: {abyc_words}; IEC 60364-4-43 433.1: {status.value}, {name}: {words} "
                "(each verdict stands in the report under its own rule)"
            )
        note = (
            f"{'failed ' + ', '.join(c[0] for c in failed) if failed else 'all three conditions hold'}; "
            f"deciding {name}: {words}; {k2_words}; {agree} (protects {', '.join(ids)})"
        )
        margin = (limit - value) / limit if limit > 0 else None
        out.append(
            Verdict(FUSE_COORDINATION.id, f.id, status, value, limit, "A", margin, FUSE_COORDINATION.clause, note)
        )
    return out


FUSE_COORDINATION = Rule(
    "fuse.coordination",
    "Fuse coordinated with the cables it protects: Ib <= In <= Iz and I2 <= 1.45 Iz",
    "IEC 60364-4-43:2008 clause 433.1 (overload coordination); I2 from the fuse's gates or its family's "
    "conventional operating current (ISO 8820 / IEC 60269-1, shipped from memory)",
    _coordination,
    ("network.mna_matrix", "conductor.ampacity_ambient_factor", "cable_heat.computed_ampacity"),
)
RULES = [FUSE_COORDINATION]

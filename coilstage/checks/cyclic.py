"""The fuse's cyclic duty: each on-period of the duty profile at the fuse's current against the
cyclic limit B'2(N) x I_melt(t_on) at the drawing's number of switchings (the maker's cyclic derating
where the drawing gives it, else the shipped default), and the element model's
peak rise over the profile repeated (it must stay below melting).

An RL load has no inrush, so a switch-on pulse integral says nothing about a retarder's fuses; what
ages their elements is the repeated heating and cooling of each on-period.
"""

from __future__ import annotations

from coilstage.analysis.cyclic import all_fuses
from coilstage.analysis.run import Analysis
from coilstage.checks.base import Rule, Status, Verdict, not_checked


def _cyclic(a: Analysis) -> list[Verdict]:
    out = []
    for fid, c in all_fuses(a.drawing, a.descent).items():
        if isinstance(c, str):
            out.append(not_checked(FUSE_CYCLIC, fid, c, "A"))
            continue
        if not c.periods:
            out.append(not_checked(FUSE_CYCLIC, fid, "the fuse carries no current over the duty profile", "A"))
            continue
        p = min(c.periods, key=lambda x: (x.limit - x.current) / x.limit)
        model = (
            f"element model: I_min {c.i_min:.1f} A, {c.tau_words}; steady-periodic peak {c.peak_share:.0%} "
            f"of its melting rise over the profile repeated ({c.repeats} repetitions)"
        )
        head = (
            f"{len(c.periods)} on-period(s); deciding: {p.current:.1f} A for {p.duration:g} s from "
            f"t = {p.start:g} s against {c.fraction:.2f} x {p.melting_current:.1f} A (I_melt at {p.duration:g} s) "
            f"= {p.limit:.1f} A; {c.fraction_words}"
        )
        if c.peak_share >= 1.0:
            status, why = Status.FAIL, "the element reaches its melting rise: the fuse opens in service"
        elif p.current > p.limit and c.makers:
            status = Status.FAIL
            why = (
                "above the maker's cyclic limit: the element fatigues and the fuse opens early in service "
                "(choose a larger rating or a fuse rated for the duty)"
            )
        elif p.current > p.limit:
            # the factor is a shipped default taken from another fuse family: not a proven failure
            status = Status.WARN
            why = (
                "above the cyclic limit: the element fatigues and the fuse may open early; the factor is a "
                "shipped default, so the fuse maker's cyclic rating decides (ask for it, or choose a larger rating)"
            )
        elif c.makers and c.rated_cycles is not None and c.rated_cycles < c.cycles:
            status = Status.WARN
            why = (
                f"within the maker's cyclic limit, but the maker rates it for {c.rated_cycles:,} switchings and "
                f"the drawing switches {c.cycles:,}: ask the fuse maker for the factor at that count"
            )
        else:
            status, why = Status.PASS, "within the cyclic limit"
        margin = (p.limit - p.current) / p.limit
        out.append(
            Verdict(
                FUSE_CYCLIC.id,
                fid,
                status,
                p.current,
                p.limit,
                "A",
                margin,
                FUSE_CYCLIC.clause,
                f"{why}; {head}; {model}",
                "duty profile",
            )
        )
    return out


FUSE_CYCLIC = Rule(
    "fuse.cyclic_duty",
    "Fuse on-currents of the duty profile within the cyclic limit B'2(N) x I_melt(t_on); element below melting",
    "Fuse makers' cyclic-loading rule I_on <= B'2(N) I_melt(t_on): the maker's cyclic derating where the "
    "drawing gives it, else a shipped default for ISO 8820 fuses (semiconductor-fuse application guide); "
    "lumped first-order element heating (Incropera & DeWitt §5.2-5.3)",
    _cyclic,
    (
        "fuse_cyclic.melting_current",
        "fuse_cyclic.rise_share_at",
        "fuse_cyclic.interpolate_cyclic_fraction",
        "fuse_cyclic.time_constant_from_i2t",
    ),
)
RULES = [FUSE_CYCLIC]

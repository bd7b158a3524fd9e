"""Horizons in the stroke search: a refinement sample first run only part of the way.

A run's highest pressures only rise, its lowest only fall and its cavities only grow (a property
of the envelope the engine keeps, no outside source), so a member that breaks a limit within a
shorter run breaks it in the whole run, and a member that breaks none may still break one later:
its pass is only provisional. These tests compare members run to a horizon with the same members
run whole, and the demo jetty's stroke windows searched with and without horizons.
"""

from pathlib import Path

import pytest

from esdsurge.engine import Variant
from esdsurge.studies import stroke as stroke_mod
from esdsurge.studies.batch import CUT_SHARE, Evaluator
from esdsurge.studies.stroke import stroke_window
from esdsurge.terminal import load

DEMO = Path(__file__).resolve().parents[2] / "terminals" / "jetty.yaml"
VALVE = "shore ESD valve"


@pytest.fixture(scope="module")
def jetty():
    return load(str(DEMO))


def test_a_member_run_to_a_horizon_fails_as_whole_or_passes_provisionally(jetty):
    case = jetty.cases[0]  # loading, shore ESD valve closes at 1 s (spill limit 6 m3)
    ev = Evaluator(jetty, case, concurrent=False)
    variants = [Variant(strokes=((VALVE, s),)) for s in (10.5, 40.0)]
    n0 = ev.node_updates
    whole = ev.evaluate(variants, keep=True)
    n_whole = ev.node_updates - n0  # both members, each run whole
    assert [o.limits_ok for o in whole] == [False, True]
    assert not any(o.provisional for o in whole)
    # 10.5 s forms a cavity before its valve has shut (11.5 s): within a 30 s horizon
    cut = ev.evaluate(variants, horizons=[30.0, 20.0])
    failed, passed = cut
    assert not failed.limits_ok and not failed.provisional
    assert {(b.element, b.what) for b in failed.breaches} <= {
        (b.element, b.what) for b in whole[0].breaches
    }
    assert failed.spill == pytest.approx(whole[0].spill, rel=1e-9)
    # 40 s, run to 20 s: no limit broken by then, a provisional pass; its valve (shut at 41 s)
    # had not shut, so it has no spill
    assert passed.limits_ok and passed.provisional
    assert passed.duration == pytest.approx(20.0)
    assert passed.spill is None and passed.spill_ok is None
    assert passed.peak_ratio <= whole[1].peak_ratio
    # run whole from where it was left: the verdict and figures of the whole run
    n0 = ev.node_updates
    (on,) = ev.evaluate(variants[1:], resume=[passed])
    assert not on.provisional and on.limits_ok and on.stopped is None
    assert on.peak_ratio == whole[1].peak_ratio and on.measures == whole[1].measures
    assert on.spill == pytest.approx(whole[1].spill, rel=1e-12)
    # the steps to 20 s are not run again: less than half of the two whole runs' work
    assert ev.node_updates - n0 < 0.5 * n_whole
    # a horizon that saves less than a tenth of the run is not used: the run is whole
    near_whole = CUT_SHARE * ev.whole_duration(variants[1]) + 0.5
    (full,) = ev.evaluate(variants[1:], horizons=[near_whole])
    assert not full.provisional and full.duration == whole[1].duration
    assert full.spill == pytest.approx(whole[1].spill, rel=1e-9)


def test_horizons_leave_the_jetty_windows_as_they_are_and_save_work(jetty, monkeypatch):
    """The same windows with and without horizons, every end run whole (common practice, no
    source: a search shortcut must not move its answer)."""
    case = next(c for c in jetty.cases if "ship closes" in c.name)
    with_h = stroke_window(jetty, case)
    monkeypatch.setattr(stroke_mod, "HORIZON_PERIODS", 1e6)  # every horizon beyond the run
    without = stroke_window(jetty, case)
    w, u = with_h.nominal, without.nominal
    assert (w.stroke_min, w.stroke_max, w.recommended) == (
        u.stroke_min,
        u.stroke_max,
        u.recommended,
    )
    by = {p.value: p for p in w.points}
    assert not by[w.stroke_min].provisional and not by[w.stroke_max].provisional
    assert by[w.recommended].ok and not by[w.recommended].provisional
    assert any(p.provisional for p in w.points)
    assert not any(p.provisional for p in without.nominal.points)
    # a provisional sample broke nothing as far as it was run, and was run less far than whole
    for p in w.points:
        if p.provisional:
            assert p.ok and p.partial and p.ran_to is not None
    assert with_h.node_updates < 0.95 * without.node_updates

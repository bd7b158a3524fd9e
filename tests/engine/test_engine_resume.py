"""Resuming a member from the state a shorter run kept (``simulate(keep_state=True)`` then
``simulate(resume=...)``): the same steps as one run from the start, so the same figures bit for
bit (the volumes, summed over a step split in two, to rounding). A property of the engine, no
outside source; the stroke search relies on it to finish a sample it first ran part way."""

from pathlib import Path

import numpy as np
import pytest

from esdsurge.engine import StopRule, Variant, simulate
from esdsurge.errors import UsageError
from esdsurge.terminal import load

ROOT = Path(__file__).resolve().parents[2] / "terminals"
EXACT = ("p_max_abs", "t_p_max", "x_p_max", "p_min_abs", "t_p_min", "cavity_max",
         "t_cavity_max", "pump_speed")  # fmt: skip


@pytest.mark.parametrize(
    ("file", "case", "share"),
    [
        ("jetty.yaml", 1, 0.37),  # the ship closes: vapour cavities on the arm
        ("jetty.yaml", 3, 0.5),  # emergency release: the coupling parts
        ("barge-dock.yaml", 2, 0.3),  # staged closure
        ("rail-rack.yaml", 2, 0.2),  # the pump ramps down on its drive
    ],
)
def test_a_resumed_member_runs_as_one_run_from_the_start(file, case, share):
    t = load(str(ROOT / file))
    c = t.cases[case]
    route, fluid = t.routes[c.route], t.products[c.product]
    kw = {"atmosphere_abs": t.atmosphere_abs, "samples": 2}
    whole = simulate(route, fluid, c, **kw)
    part = simulate(route, fluid, c, duration=share * whole.duration, keep_state=True, **kw)
    on = simulate(route, fluid, c, resume=part.states, **kw)
    for name in EXACT:
        assert np.array_equal(getattr(on, name), getattr(whole, name), equal_nan=True), name
    for env_on, env_whole in zip(on.envelopes, whole.envelopes, strict=True):
        assert np.array_equal(env_on.p_max_abs, env_whole.p_max_abs)
        assert np.array_equal(env_on.p_min_abs, env_whole.p_min_abs)
    assert np.allclose(on.volume_through, whole.volume_through, rtol=1e-12, atol=1e-12)
    assert part.node_updates + on.node_updates == whole.node_updates
    # the last sample is the whole run's; the samples before the resumed step are not known
    assert np.array_equal(on.p_in_abs[..., -1], whole.p_in_abs[..., -1])


def test_a_state_is_not_kept_for_a_stopped_member_and_does_not_fit_another_grid():
    t = load(str(ROOT / "jetty.yaml"))
    c = t.cases[0]
    route, fluid = t.routes[c.route], t.products[c.product]
    v = [Variant(strokes=(("shore ESD valve", 20.0),))]
    part = simulate(route, fluid, c, variants=v, duration=5.0, keep_state=True, samples=2)
    assert part.states[0] is not None and part.states[0].step * part.dt[0] >= 5.0 - 1e-9
    # a 5 s stroke forms a cavity and is stopped: nothing to go on from
    fast = [Variant(strokes=(("shore ESD valve", 5.0),))]
    names = tuple(e.name for e in route.elements)
    soon = StopRule(no_cavity=names, cavity=0.0, after=(0.0,))
    stopped = simulate(route, fluid, c, variants=fast, duration=15.0, stop=soon, keep_state=True)
    assert stopped.stopped[0] < 15.0 and stopped.states == (None,)
    other = load(str(ROOT / "barge-dock.yaml"))
    oc = other.cases[0]
    with pytest.raises(UsageError, match="time step"):
        simulate(other.routes[oc.route], other.products[oc.product], oc, resume=part.states)

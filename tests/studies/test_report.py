"""The review pack's study: checklist statuses follow the results; the pack is written atomically.

A short invented berth (pump, 150 m line, ESD valve, hose, release coupling, manifold) keeps the
engine work to a few seconds: one report with a reduced scan, reused by every test here.
"""

import json
from html.parser import HTMLParser
from pathlib import Path
from types import SimpleNamespace

import pytest

from esdsurge.errors import UsageError
from esdsurge.present.report import steps as pack_steps
from esdsurge.present.report import write_report
from esdsurge.present.report.writer import PACK_MARK, write_pack
from esdsurge.studies.check import check
from esdsurge.studies.report import (
    ACTION,
    HOLDS,
    NOT_ASSESSED,
    TOPICS,
    Item,
    checklist,
    report,
)
from esdsurge.terminal import loads

BERTH = """
format: 1
terminal: short test berth (invented)
products:
  diesel: {builtin: diesel}
routes:
  line:
    - tank: feed tank
      surface: 8 m
    - pump: feed pump
      curve: [[0 m^3/h, 50 m], [100 m^3/h, 46 m], [200 m^3/h, 35 m]]
      pushes: to-carrier
      speed: 2950 rpm
      inertia: 0.5 kg*m^2
    - pipe: feed line
      length: 150 m
      size: {nps: 6, schedule: 40}
      design_pressure: 16 barg
      surge_allowance: 10 %
    - valve: berth ESD valve
      type: ball
      cv: 1500
      size: 6 in
      flange_class: 150
    - hose: berth hose
      length: 8 m
      inside_diameter: 152 mm
      expansion: 0.8 %/bar
      rated_working_pressure: 10 barg
      min_pressure: 0.2 bara
    - coupling: berth release coupling
      closing_time: 3 s
      k_open: 0.4
    - manifold: barge manifold
      design_pressure: 10 barg
    - pipe: barge line
      length: 20 m
      size: {nps: 6, schedule: 40}
      design_pressure: 10 barg
    - tank: barge tank
      surface: 2 m
cases:
  - name: release before the valve is shut
    route: line
    product: diesel
    rate: 120 m^3/h
    events:
      - {at: 0 s, trip: feed pump}
      - {at: 0 s, close: berth ESD valve, stroke: 6 s}
      - {at: 2 s, release: berth release coupling}
    max_closure_time: 5 s
  - name: release after the valve is shut
    route: line
    product: diesel
    rate: 120 m^3/h
    events:
      - {at: 0 s, trip: feed pump}
      - {at: 0 s, close: berth ESD valve, stroke: 4 s}
      - {at: 8 s, release: berth release coupling}
    max_closure_time: 10 s
    spill_limit: 0.5 m^3
  - name: ESD valve slams shut
    route: line
    product: diesel
    rate: 120 m^3/h
    events:
      - {at: 0 s, close: berth ESD valve, stroke: 0.1 s}
      - {at: 1 s, trip: feed pump}
"""
EARLY, LATE, SLAM = (
    "release before the valve is shut",
    "release after the valve is shut",
    "ESD valve slams shut",
)
SECTIONS = (
    "scope",
    "summary",
    "checklist",
    "lineups",
    "products",
    "inputs",
    "cases",
    "stroke",
    "rate",
    "robust",
    "assumptions",
    "cautions",
    "signoff",
)


@pytest.fixture(scope="module")
def berth(tmp_path_factory):
    path = tmp_path_factory.mktemp("berth") / "berth.yaml"
    path.write_text(BERTH)
    return loads(BERTH, str(path))


@pytest.fixture(scope="module")
def res(berth):
    # a coarser first scan than the command's (the refinement is the same): seconds, not minutes
    return report(
        berth,
        [EARLY, LATE],
        spread=True,
        stroke_options={"coarse": 4},
        rate_options={"coarse": 4},
    )


def items(res_or_list, topic, case=None):
    source = res_or_list.checklist if hasattr(res_or_list, "checklist") else res_or_list
    return [i for i in source if i.topic == topic and (case is None or i.case == case)]


def number(item: Item, label: str) -> float:
    return next(n.value for n in item.numbers if n.label == label)


# --- checklist statuses ------------------------------------------------------------------------


def test_esd_order_compares_the_valves_shut_times_with_the_release(res):
    early = items(res, "order", EARLY)[0]
    late = items(res, "order", LATE)[0]
    # EARLY: the valve (6 s stroke from 0 s) is still moving when the release starts at 2 s
    assert early.status == ACTION
    assert "berth ESD valve" in early.why
    assert number(early, "release starts") == 2.0
    assert number(early, "berth ESD valve shut") == 6.0
    # LATE: shut at 4 s, release at 8 s, the pump tripped at 0 s
    assert late.status == HOLDS
    assert number(late, "berth ESD valve shut") == 4.0
    assert number(late, "feed pump trips") == 0.0
    # the flow read from the run at the release: a line still flowing against one at rest
    q_early = number(early, "flow through berth release coupling at the release")
    q_late = number(late, "flow through berth release coupling at the release")
    # common practice, no source: a ball valve passes most of the flow until late in its stroke
    assert q_early > 0.5 * 120 / 3600
    assert q_late < 0.1 * q_early


def test_code_closure_rule_holds_only_when_shut_in_time(res):
    early = items(res, "code", EARLY)[0]
    late = items(res, "code", LATE)[0]
    assert (early.status, number(early, "shut")) == (ACTION, 6.0)
    assert (late.status, number(late, "shut")) == (HOLDS, 4.0)
    assert number(early, "allowed from the trigger") == 5.0


def test_stroke_status_follows_the_window(res):
    windows = {w.case.name: w for w in res.stroke.windows}
    for case in (EARLY, LATE):
        w = windows[case]
        item = items(res, "stroke", case)[0]
        inside = True
        for win in (w.nominal, w.spread):
            if win is None:
                continue
            inside &= (
                not win.empty
                and win.stroke_min <= w.stroke_file
                and (win.stroke_max is None or w.stroke_file <= win.stroke_max)
            )
        assert item.status == (HOLDS if inside else ACTION), (case, item)
    # EARLY's rule lets the valve take at most 5 s: the 6 s stroke is too slow
    early = items(res, "stroke", EARLY)[0]
    assert early.status == ACTION and "slower" in early.why


def test_rate_status_follows_the_rate_limits(res):
    for rc in res.rate.cases:
        item = items(res, "rate", rc.case.name)[0]
        q = number(item, "case rate")
        ok = rc.rate_max is not None and q <= rc.rate_max + 0.5 / 3600
        ok &= rc.rate_max_spread is not None and q <= rc.rate_max_spread + 0.5 / 3600
        assert item.status == (HOLDS if ok else ACTION)


def test_a_failing_element_needs_action_and_is_named(berth):
    chk = check(berth, [SLAM])
    cc = chk.cases[0]
    failing = [ev for ev in cc.elements if not ev.ok_max]
    assert cc.verdict == "fail" and failing  # a 0.1 s closure: the Joukowsky rise breaks limits
    found = checklist(chk, None, None)
    for ev in failing:
        it = next(i for i in items(found, "limit") if i.element == ev.name and "highest" in i.claim)
        assert it.status == ACTION
        assert SLAM in it.why
        assert number(it, "margin") == pytest.approx(ev.margin_max)
    # without the searches, their items are not assessed (never "holds")
    assert {i.status for i in items(found, "stroke") + items(found, "rate")} == {NOT_ASSESSED}


def test_element_without_a_limit_is_not_assessed_and_site_data_is_never_assessed(res):
    coupling = [i for i in items(res, "limit") if i.element == "berth release coupling"]
    assert [i.status for i in coupling] == [NOT_ASSESSED]
    site = items(res, "site")
    assert {i.status for i in site} == {NOT_ASSESSED}
    tests = next(i for i in site if "stroke test" in i.claim)
    assert sorted(n.value for n in tests.numbers) == [4.0, 6.0]
    assert any("certificate" in i.claim and i.element == "berth hose" for i in site)
    assert any("relief" in i.claim for i in site)


def test_checklist_runs_in_topic_order_and_statuses_are_known(res):
    order = list(TOPICS)
    topics = [order.index(i.topic) for i in res.checklist]
    assert topics == sorted(topics)
    assert {i.status for i in res.checklist} <= {HOLDS, ACTION, NOT_ASSESSED}
    assert res.ok is False  # EARLY needs action


def test_stroke_status_rules_with_the_band():
    from esdsurge.studies.report import _stroke_status

    def window(lo, hi, empty=False):
        return SimpleNamespace(
            stroke_min=lo, stroke_max=hi, empty=empty, reason="limits collide",
            min_governed_by="hose", max_governed_by="spill",
        )  # fmt: skip

    def status(stroke, nominal, band):
        w = SimpleNamespace(stroke_file=stroke, nominal=nominal, spread=band)
        return _stroke_status(w)[0]

    assert status(10.0, window(5.0, 20.0), window(6.0, 15.0)) == HOLDS
    assert status(10.0, window(5.0, None), None) == HOLDS  # nothing sets a slow end
    assert status(4.0, window(5.0, 20.0), None) == ACTION  # faster than the fastest safe
    assert status(25.0, window(5.0, 20.0), None) == ACTION  # slower than allowed
    assert status(10.0, window(5.0, 20.0), window(11.0, 15.0)) == ACTION  # not robust
    assert status(10.0, window(5.0, 20.0), window(None, None, empty=True)) == ACTION


def test_notes_name_what_is_estimated_or_generic(res):
    notes = res.notes
    hose = [n for n in notes if n.subject == "berth hose" and n.topic == "wave speed"]
    assert hose and "expansion" in hose[0].text and "not measured" in hose[0].text
    generic = [n for n in notes if n.topic == "valve"]
    assert any("berth ESD valve" in n.subject and "generic" in n.text for n in generic)
    assert any(n.subject == "diesel" and "conductivity" in n.text for n in notes)


# --- writing the pack ----------------------------------------------------------------------------


class Page(HTMLParser):
    def __init__(self):
        super().__init__()
        self.ids, self.imgs, self.refs, self.tags = set(), [], [], []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append(tag)
        if "id" in a:
            self.ids.add(a["id"])
        if tag == "img":
            self.imgs.append(a.get("src", ""))
        for key in ("href", "src"):
            if key in a and tag != "img":
                self.refs.append(a[key])


def test_pack_is_written_with_every_part(res, tmp_path):
    target = write_report(res, tmp_path / "pack", units="us")
    names = sorted(p.name for p in target.iterdir())
    assert names == ["figures", "report.html", "report.md", "results.json"]
    html = (target / "report.html").read_text()
    page = Page()
    page.feed(html)
    assert set(SECTIONS) <= page.ids
    pngs = sorted((target / "figures").glob("*.png"))
    assert len(pngs) == 4 and len(page.imgs) == 4
    assert all(s.startswith("data:image/png;base64,") for s in page.imgs)
    assert "script" not in page.tags and "link" not in page.tags
    assert all(r.startswith("#") for r in page.refs)
    assert "http://" not in html and "https://" not in html
    assert "psig" in html  # --units us
    data = json.loads((target / "results.json").read_text())
    assert data[PACK_MARK[0]] == PACK_MARK[1]
    assert {"check", "lint", "stroke", "rate", "checklist"} <= set(data)
    md = (target / "report.md").read_text()
    for p in pngs:
        assert f"](figures/{p.name})" in md


def test_interrupted_writing_leaves_nothing_behind(res, tmp_path, monkeypatch):
    def broken(doc):
        raise RuntimeError("disk full (simulated)")

    monkeypatch.setattr(pack_steps, "render_markdown", broken)
    with pytest.raises(RuntimeError, match="simulated"):
        write_report(res, tmp_path / "pack")
    assert list(tmp_path.iterdir()) == []


def test_a_failed_rewrite_keeps_the_old_pack(res, tmp_path, monkeypatch):
    target = write_report(res, tmp_path / "pack")
    before = (target / "report.html").read_bytes()

    def broken(res, files):
        raise RuntimeError("interrupted (simulated)")

    monkeypatch.setattr(pack_steps, "results_json", broken)
    with pytest.raises(RuntimeError, match="simulated"):
        write_report(res, target, force=True)
    assert (target / "report.html").read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["pack"]


def test_existing_folder_refused_unless_force_and_only_packs_are_replaced(tmp_path):
    def step(folder: Path):
        (folder / "results.json").write_text(json.dumps({PACK_MARK[0]: PACK_MARK[1]}))

    target = tmp_path / "pack"
    write_pack(target, [("one", step)])
    with pytest.raises(UsageError, match="exists"):
        write_pack(target, [("one", step)])
    write_pack(target, [("one", step)], force=True)  # an earlier pack: replaced
    other = tmp_path / "notes"
    other.mkdir()
    (other / "mine.txt").write_text("keep me")
    with pytest.raises(UsageError, match="does not hold an esdsurge pack"):
        write_pack(other, [("one", step)], force=True)
    assert (other / "mine.txt").read_text() == "keep me"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["notes", "pack"]


def test_a_missing_study_leaves_a_marked_place_and_its_items_not_assessed(
    berth, tmp_path, monkeypatch
):
    import sys

    # as if the stroke and rate studies were not installed
    monkeypatch.setitem(sys.modules, "esdsurge.studies.stroke", None)
    monkeypatch.setitem(sys.modules, "esdsurge.studies.rate", None)
    res = report(berth, [LATE])
    assert res.stroke is None and res.rate is None
    assert [s for s, _ in res.missing] == ["stroke", "rate"]
    assert {i.status for i in items(res, "stroke") + items(res, "rate")} == {NOT_ASSESSED}
    target = write_report(res, tmp_path / "pack")
    html = (target / "report.html").read_text()
    assert html.count("NOT INCLUDED") >= 2
    data = json.loads((target / "results.json").read_text())
    assert data["stroke"] is None and data["rate"] is None


RELIEF = """
    - relief: berth surge relief
      set_pressure: 6 barg
      kv: {kv}
      opening_time: 0.05 s
      closing_time: 1 s
      receiver_volume: {room}
"""


@pytest.mark.parametrize(
    ("kv", "room", "capacity", "fits"),
    [(4, "1 L", ACTION, ACTION), (400, "5 m^3", HOLDS, HOLDS)],
)
def test_relief_valve_items_follow_what_it_did(tmp_path, kv, room, capacity, fits):
    # A relief valve beside the ESD valve that slams shut: a small one (kv 4) is driven
    # fully open above its full-open pressure and overfills a 1 L relief tank; a large one
    # (kv 400) is never asked for more than its full-open flow and its tank has room.
    text = BERTH.replace(
        "    - valve: berth ESD valve",
        RELIEF.format(kv=kv, room=room) + "    - valve: berth ESD valve",
    )
    path = tmp_path / "berth.yaml"
    path.write_text(text)
    chk = check(loads(text, str(path)), [SLAM])
    got = items(checklist(chk, None, None), "mitigation", SLAM)
    branch = chk.cases[0].branches[0]
    assert [i.status for i in got] == [capacity, fits]
    assert got[0].numbers[0].value == branch.flow_max
    assert got[1].numbers == (
        type(got[1].numbers[0])("relieved", branch.volume, "volume"),
        type(got[1].numbers[0])("room", branch.receiver_volume, "volume"),
    )
    assert branch.over_capacity is (capacity == ACTION)
    if fits == ACTION:  # an overfilled relief tank fails the case
        assert chk.cases[0].verdict == "fail"

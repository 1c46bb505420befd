"""The ranking: severity first, then the documented score computed by hand, the repeat discount, stable order."""
import pytest

from pitfalls.model import Finding, SectionInfo
from pitfalls.report.rank import rank_findings, score

INFO = SectionInfo(path="x.sgy", sha256="0" * 64, geometry="2d", n_traces=200, n_samples=100, dt_ms=4.0, t0_ms=0.0)
RANKING = {"weight_severity": 0.6, "weight_confidence": 0.3, "weight_extent": 0.1, "repeat_factor": 0.85, "min_confidence": 0.05}


def finding(id_="pick.cycle-skip", severity="medium", confidence=0.5, horizon="H1", traces=(1, 50)):
    return Finding(id=id_, detector="d", severity=severity, confidence=confidence, title="t", advice="a",
                   horizon=horizon, traces=traces)


def test_score_by_hand():
    # 0.6 * 0.6 + 0.3 * 0.5 + 0.1 * 50/200 = 0.535
    assert score(finding(), INFO, RANKING) == pytest.approx(0.535)
    # high, confidence 1, whole line: 0.6 + 0.3 + 0.1 = 1
    assert score(finding(severity="high", confidence=1.0, traces=(1, 200)), INFO, RANKING) == pytest.approx(1.0)


def test_repeat_discount_spreads_the_top_over_horizons():
    first = finding(severity="high", confidence=0.9, horizon="A")
    second = finding(id_="pick.polarity-flip", severity="high", confidence=0.85, horizon="A")
    other = finding(severity="high", confidence=0.8, horizon="B")
    ranked = rank_findings([second, other, first], INFO, RANKING)
    assert [(f.horizon, f.confidence) for f in ranked] == [("A", 0.9), ("B", 0.8), ("A", 0.85)]
    assert [f.rank for f in ranked] == [1, 2, 3]
    assert ranked[2].score == pytest.approx(0.85 * score(second, INFO, RANKING))


def test_weights_are_scaled_to_sum_to_one():
    doubled = {**RANKING, "weight_severity": 1.2, "weight_confidence": 0.6, "weight_extent": 0.2}
    assert score(finding(), INFO, doubled) == pytest.approx(score(finding(), INFO, RANKING))


def test_severity_orders_the_report_before_the_score():
    """A confident, long medium outscores a doubtful, short high, and still ranks after it."""
    weak_high = finding(id_="contact.tilted", severity="high", confidence=0.06, horizon="A", traces=(1, 2))
    strong_medium = finding(id_="multiple.seafloor", severity="medium", confidence=1.0, horizon="B", traces=(1, 200))
    strong_low = finding(id_="pick.cycle-skip", severity="low", confidence=1.0, horizon="C", traces=(1, 200))
    assert score(strong_medium, INFO, RANKING) > score(weak_high, INFO, RANKING)
    ranked = rank_findings([strong_low, strong_medium, weak_high], INFO, RANKING)
    assert [f.severity for f in ranked] == ["high", "medium", "low"]


def test_every_shuffle_of_mixed_findings_comes_out_severity_first_then_score():
    import random
    rng = random.Random(7)
    findings = [finding(id_=f"pick.kind{i}", severity=rng.choice(["high", "medium", "low"]),
                        confidence=rng.uniform(0.05, 1.0), horizon=rng.choice(["A", "B", "C", None]),
                        traces=(1, rng.randint(1, 200))) for i in range(40)]
    for _ in range(5):
        rng.shuffle(findings)
        ranked = rank_findings(findings, INFO, RANKING)
        order = {"high": 0, "medium": 1, "low": 2}
        keys = [(order[f.severity], -f.score) for f in ranked]
        assert keys == sorted(keys)
        assert [f.rank for f in ranked] == list(range(1, 41))


def test_order_is_stable_for_ties():
    a = finding(id_="pick.cycle-skip", horizon=None)
    b = finding(id_="pick.polarity-flip", horizon=None)
    assert [f.id for f in rank_findings([b, a], INFO, RANKING)] == [f.id for f in rank_findings([a, b], INFO, RANKING)]


def test_findings_their_detector_does_not_believe_are_dropped():
    kept = finding(confidence=0.05)
    ranked = rank_findings([finding(confidence=0.0), kept, finding(confidence=0.049)], INFO, RANKING)
    assert [f.confidence for f in ranked] == [0.05]


# --- one finding per event ------------------------------------------------------------------------
from pitfalls.report.rank import merge_events, with_fingerprints  # noqa: E402


def event(id_, detector, severity, confidence, horizon=None, traces=(100, 200), twt_ms=(1000.0, 1100.0)):
    return Finding(id=id_, detector=detector, severity=severity, confidence=confidence, title=f"{id_} title",
                   advice=f"{id_} advice", horizon=horizon, traces=traces, twt_ms=twt_ms,
                   evidence={"length_traces": traces[1] - traces[0] + 1})


def test_two_detectors_on_one_event_give_one_finding_with_both_evidences():
    """A diagenetic-like boundary and an unpicked flat event on the same traces and times are one event:
    one finding, named by the specific id at the stronger class, carrying both detectors' evidence."""
    boundary = event("crosscut.diagenetic-like", "crosscut", "low", 0.7, traces=(130, 594), twt_ms=(2088.0, 2232.0))
    flat = event("contact.unpicked-flat-event", "contacts", "medium", 0.94, traces=(204, 416), twt_ms=(2100.0, 2160.0))
    other = event("contact.unpicked-flat-event", "contacts", "low", 0.8, traces=(1, 98), twt_ms=(2064.0, 2148.0))
    ranked = rank_findings([flat, boundary, other], INFO, RANKING)
    assert len(ranked) == 2
    joined = next(f for f in ranked if f.traces == (204, 416))
    assert (joined.id, joined.severity, joined.detector) == ("contact.unpicked-flat-event", "medium", "contacts")
    assert joined.detectors == ("contacts", "crosscut")
    assert joined.evidence["merged_ids"] == ["crosscut.diagenetic-like"]
    assert joined.evidence["crosscut.diagenetic-like.length_traces"] == 465
    assert joined.confidence == pytest.approx(0.94)
    assert joined.traces == (204, 416) and joined.twt_ms == (2100.0, 2160.0)  # the lead's place
    assert joined.evidence["crosscut.diagenetic-like.traces"] == [130, 594]  # the member's own, in its evidence


def test_at_equal_severity_the_specific_id_names_the_event():
    boundary = event("crosscut.diagenetic-like", "crosscut", "medium", 0.7)
    flat = event("contact.unpicked-flat-event", "contacts", "medium", 0.95)
    (joined,) = merge_events([flat, boundary], 0.5)
    assert joined.id == "crosscut.diagenetic-like" and joined.detectors == ("contacts", "crosscut")
    assert joined.confidence == pytest.approx(0.7)  # the lead's own confidence: the other's is in another claim


@pytest.mark.parametrize("change", [
    {"horizon": "H1"},                      # a pick finding is not the section's event
    {"twt_ms": (1200.0, 1300.0)},           # other times
    {"traces": (190, 400)},                 # 11 shared traces of the shorter 101: under half
])
def test_findings_apart_stay_apart(change):
    first = event("crosscut.hydrate-like", "crosscut", "medium", 0.9)
    second = event("contact.unpicked-flat-event", "contacts", "medium", 0.9, **{"traces": (100, 200), **change})
    assert len(merge_events([first, second], 0.5)) == 2


def test_single_findings_name_their_detector_and_keep_their_evidence():
    (alone,) = merge_events([event("pick.cycle-skip", "pick_consistency", "high", 0.9, horizon="H1")], 0.5)
    assert alone.detectors == ("pick_consistency",) and "merged_ids" not in alone.evidence


def test_fingerprints_are_stable_across_runs_order_and_small_pick_edits():
    """The fingerprint depends on id, horizon and the finding's place among its kind on that horizon,
    not on the exact range, the confidence or the order the detectors returned them in."""
    a = event("pick.cycle-skip", "pick_consistency", "high", 0.9, horizon="H1", traces=(10, 30))
    b = event("pick.cycle-skip", "pick_consistency", "medium", 0.6, horizon="H1", traces=(200, 260))
    c = event("multiple.seafloor", "multiples", "high", 0.9, horizon="H2", traces=(10, 300))
    first = [f.fingerprint for f in with_fingerprints([a, b, c])]
    edited_a = Finding(**{**vars(a), "traces": (11, 29)})
    edited_b = Finding(**{**vars(b), "traces": (203, 258), "confidence": 0.55})
    second = {f.id + str(f.traces): f.fingerprint for f in with_fingerprints([edited_b, c, edited_a])}
    assert [second["pick.cycle-skip(11, 29)"], second["pick.cycle-skip(203, 258)"],
            second["multiple.seafloor(10, 300)"]] == first
    assert len(set(first)) == 3 and all(len(value) == 12 for value in first)


def test_thresholds_are_not_printed_as_measurements():
    """Rule limits carried in the evidence (also under a joined member's prefix) are listed apart from the
    measured numbers, in the terminal panel as in the Markdown report."""
    from pitfalls.report.text import split_evidence
    evidence = {"departure_deg_median": 4.2, "max_departure_deg": 3.0,
                "crosscut.hydrate-like.stability_tolerance_ms": 50.0, "run_traces": 40}
    measured, limits = split_evidence(evidence)
    assert [key for key, _ in measured] == ["departure_deg_median", "run_traces"]
    assert [key for key, _ in limits] == ["max_departure_deg", "crosscut.hydrate-like.stability_tolerance_ms"]

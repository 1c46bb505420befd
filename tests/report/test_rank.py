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

"""The rank score: the documented formula computed by hand, the repeat discount, stable order."""
import pytest

from pitfalls.model import Finding, SectionInfo
from pitfalls.report.rank import rank_findings, score

INFO = SectionInfo(path="x.sgy", sha256="0" * 64, geometry="2d", n_traces=200, n_samples=100, dt_ms=4.0, t0_ms=0.0)
RANKING = {"weight_severity": 0.6, "weight_confidence": 0.3, "weight_extent": 0.1, "repeat_factor": 0.85, "min_confidence": 0.05}


def finding(id_="pick.cycle-skip", severity="medium", confidence=0.5, horizon="H1", traces=(1, 50)):
    return Finding(id=id_, detector="d", severity=severity, confidence=confidence, title="t", advice="a",
                   horizon=horizon, traces=traces)


def test_score_by_hand():
    # (0.6 * 0.6 + 0.3 * 0.5 + 0.1 * 50/200) / 1.0 = 0.535
    assert score(finding(), INFO, RANKING) == pytest.approx(0.535)
    # high, confidence 1, whole line: (0.6 + 0.3 + 0.1) / 1.0 = 1
    assert score(finding(severity="high", confidence=1.0, traces=(1, 200)), INFO, RANKING) == pytest.approx(1.0)


def test_repeat_discount_spreads_the_top_over_horizons():
    first = finding(severity="high", confidence=0.9, horizon="A")
    second = finding(id_="pick.polarity-flip", severity="high", confidence=0.85, horizon="A")
    other = finding(severity="high", confidence=0.8, horizon="B")
    ranked = rank_findings([second, other, first], INFO, RANKING)
    assert [(f.horizon, f.confidence) for f in ranked] == [("A", 0.9), ("B", 0.8), ("A", 0.85)]
    assert [f.rank for f in ranked] == [1, 2, 3]
    assert ranked[2].score == pytest.approx(0.85 * score(second, INFO, RANKING))


def test_order_is_stable_for_ties():
    a = finding(id_="pick.cycle-skip", horizon=None)
    b = finding(id_="pick.polarity-flip", horizon=None)
    assert [f.id for f in rank_findings([b, a], INFO, RANKING)] == [f.id for f in rank_findings([a, b], INFO, RANKING)]


def test_findings_their_detector_does_not_believe_are_dropped():
    kept = finding(confidence=0.05)
    ranked = rank_findings([finding(confidence=0.0), kept, finding(confidence=0.049)], INFO, RANKING)
    assert [f.confidence for f in ranked] == [0.05]

"""The registry, the rules file and the explain texts agree."""
import yaml

from pitfalls import detectors
from pitfalls.io.rules import BUILT_IN, CORE_KEYS, default_rules_bytes, load_rules


def test_rule_keys_match_default_yaml():
    """Every detector's RULE_KEYS and its rules/default.yaml section hold the same keys, and no section is orphaned."""
    defaults = yaml.safe_load(default_rules_bytes().decode("utf-8"))
    assert set(defaults) == set(CORE_KEYS) | set(detectors.BY_NAME) | {m.NAME for m in detectors.PROJECT_CHECKS}
    for module in detectors.DETECTORS + detectors.PROJECT_CHECKS:
        assert set(defaults[module.NAME]) == set(module.RULE_KEYS), module.NAME


def test_defaults_validate():
    rules, path, sha = load_rules(None, detectors.rule_keys())
    assert path == BUILT_IN and len(sha) == 64
    assert rules["velocity"]["water_velocity_m_s"] == 1500.0


def test_every_kind_has_three_texts_and_a_contract_family():
    kinds = detectors.finding_kinds()
    assert {"pick.cycle-skip", "pick.polarity-flip", "multiple.seafloor", "contact.conformable",
            "crosscut.hydrate-like", "pick.mis-tie"} <= set(kinds)
    for finding_id, (detector, texts) in kinds.items():
        family, _, kind = finding_id.partition(".")
        assert family in {"multiple", "contact", "crosscut", "overburden", "pick"} and kind, finding_id
        assert len(texts) == 3 and all(isinstance(t, str) and len(t) > 20 for t in texts), finding_id


def test_detectors_have_unique_names_and_docstrings():
    names = [module.NAME for module in detectors.DETECTORS + detectors.PROJECT_CHECKS]
    assert len(names) == len(set(names))
    for module in detectors.DETECTORS + detectors.PROJECT_CHECKS:
        assert module.__doc__ and "References" in module.__doc__, module.NAME


def test_texts_name_their_sources_and_do_not_overstate():
    """The explain texts and the rules comments a geophysicist reads: full citations, no pointers to
    files users do not have, and the wording the physics allows."""
    import pathlib
    root = pathlib.Path(__file__).resolve().parents[1]
    rules_text = (root / "rules" / "default.yaml").read_text(encoding="utf-8")
    kinds = detectors.finding_kinds()
    texts = " ".join(" ".join(value) for _, value in kinds.values())
    assert "REFERENCES" not in rules_text and "REFERENCES" not in texts
    assert "static aquifer allows" not in texts
    tilted = " ".join(kinds["contact.tilted"][1])
    for cause in ("flowing water", "capillary", "reservoir quality", "fault compartments", "depth-conversion",
                  "miscorrelation"):
        assert cause in tilted, cause
    assert "pressure-temperature boundary" in " ".join(kinds["crosscut.hydrate-like"][1])
    assert "attenuation below" in kinds["crosscut.hydrate-like"][1][2]
    assert "2-D line" in " ".join(kinds["contact.outside-closure"][1])
    assert "?" in kinds["pick.polarity-flip"][1][0] and "gas" in kinds["pick.polarity-flip"][1][1]
    assert "-2R/(1 + R^2)" in rules_text and "rho ~ -R" not in rules_text
    assert "usual picking accuracy" not in rules_text and "Fresnel" not in rules_text

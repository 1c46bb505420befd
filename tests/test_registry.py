"""The registry, the rules file and the explain texts agree."""
import yaml

from pitfalls import detectors
from pitfalls.io.rules import BUILT_IN, CORE_KEYS, default_rules_bytes, load_rules


def test_rule_keys_match_default_yaml():
    """Every detector's RULE_KEYS and its rules/default.yaml section hold the same keys, and no section is orphaned."""
    defaults = yaml.safe_load(default_rules_bytes().decode("utf-8"))
    assert set(defaults) == set(CORE_KEYS) | set(detectors.BY_NAME)
    for module in detectors.DETECTORS:
        assert set(defaults[module.NAME]) == set(module.RULE_KEYS), module.NAME


def test_defaults_validate():
    rules, path, sha = load_rules(None, detectors.rule_keys())
    assert path == BUILT_IN and len(sha) == 64
    assert rules["velocity"]["water_velocity_m_s"] == 1500.0


def test_every_kind_has_three_texts_and_a_contract_family():
    kinds = detectors.finding_kinds()
    assert {"pick.cycle-skip", "pick.polarity-flip", "multiple.seafloor", "contact.conformable",
            "crosscut.hydrate-like"} <= set(kinds)
    for finding_id, (detector, texts) in kinds.items():
        family, _, kind = finding_id.partition(".")
        assert family in {"multiple", "contact", "crosscut", "overburden", "pick"} and kind, finding_id
        assert len(texts) == 3 and all(isinstance(t, str) and len(t) > 20 for t in texts), finding_id


def test_detectors_have_unique_names_and_docstrings():
    names = [module.NAME for module in detectors.DETECTORS]
    assert len(names) == len(set(names))
    for module in detectors.DETECTORS:
        assert module.__doc__ and "References" in module.__doc__, module.NAME

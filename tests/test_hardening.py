"""Hostile inputs and hostile paths through the command line: exit 2 with one line, no traceback,
inputs unchanged, nothing overwritten."""
import hashlib
import os
import subprocess
import sys

ALIAS_BOMB = "\n".join(
    ["velocity: &a [x, x, x, x, x, x, x, x, x]"]
    + [f"k{i}: &k{i} [{', '.join([('*a' if i == 0 else f'*k{i - 1}')] * 9)}]" for i in range(8)]
) + "\n"


def pitfalls(*args, cwd=None, timeout=120):
    env = {**os.environ, "COLUMNS": "120"}
    return subprocess.run([sys.executable, "-m", "pitfalls", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=timeout)


def sha256(path):
    with open(path, "rb") as handle:
        return hashlib.sha256(handle.read()).hexdigest()


def assert_one_line_error(result, *fragments):
    assert result.returncode == 2, result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("pitfalls: error: ")
    assert "Traceback" not in result.stderr
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


# --- YAML -----------------------------------------------------------------------------
def test_alias_bomb_rules_file_is_refused_by_rules_and_scan(tmp_path):
    bomb = tmp_path / "bomb.yaml"
    bomb.write_text(ALIAS_BOMB)
    before = sha256(bomb)
    assert_one_line_error(pitfalls("rules", "--rules", bomb, timeout=30), str(bomb), "line 1", "anchor &a")
    assert_one_line_error(pitfalls("scan", tmp_path / "absent.sgy", "--rules", bomb, timeout=30), "anchor &a")
    assert sha256(bomb) == before


def test_duplicate_rules_key_is_refused(tmp_path):
    rules = tmp_path / "rules.yaml"
    rules.write_text("seafloor:\n  snap_ms: 2\n  snap_ms: 3\n")
    before = sha256(rules)
    assert_one_line_error(pitfalls("rules", "--rules", rules), "line 3", "repeats the key 'snap_ms'")
    assert sha256(rules) == before

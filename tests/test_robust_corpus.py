"""The malformed-input corpus in tests/corpus: every bad file gets one line naming file, line and
field, exit status 2, and leaves the store's content hash as it was; broken plugin files are
reported by name with their error while every built-in model keeps working.

The corpus is a test scenario of our own (the invented Fennwick brine bench; see
tests/corpus/README.md). What each message must say is the file formats' contract in
DEVELOPERS.md (file, line, field); the fragments are that contract written out per file.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from saltbench.store import open_store
from saltbench.store.queries import content_hash

CORPUS = Path(__file__).resolve().parent / "corpus"
GOOD_BIB = CORPUS / "good" / "fennwick.sources.txt"


def _index() -> list[tuple[str, int, str, str]]:
    rows = []
    for raw in (CORPUS / "expected.txt").read_text(encoding="utf-8").splitlines():
        if not raw.strip() or raw.startswith("#"):
            continue
        name, line, field, fragment = (s.strip() for s in raw.split("|", 3))
        rows.append((name, int(line), field, fragment))
    return rows


INDEX = _index()


def test_the_index_and_the_folder_agree() -> None:
    listed = {name for name, *_ in INDEX}
    on_disk = {p.name for p in (CORPUS / "bad").iterdir()}
    assert listed == on_disk
    assert len(listed) >= 30  # issue 7, item 5: at least 30 malformed inputs


def _hash(store: Path) -> str:
    s = open_store(store)
    try:
        return content_hash(s)
    finally:
        s.close()


def _command(path: Path) -> list[str]:
    # A dataset or parameter file cites the scenario's bibliography, given in the same command,
    # so each fails for its own fault and not for an unknown citation key.
    if path.name.endswith(".sources.txt"):
        return ["data", "add", str(path)]
    if path.name.endswith(".readings.csv"):
        return ["readings", "add", str(GOOD_BIB), str(path)]
    return ["data", "add", str(GOOD_BIB), str(path)]


@pytest.mark.parametrize(("name", "line", "field", "fragment"), INDEX, ids=[r[0] for r in INDEX])
def test_malformed_file_gives_one_line_naming_file_line_field(
        name: str, line: int, field: str, fragment: str, seeded_store: Path, run_main) -> None:
    bad = CORPUS / "bad" / name
    before = _hash(seeded_store)
    code, out, err = run_main(*_command(bad), store=seeded_store)
    assert code == 2, (code, out, err)
    assert out == ""
    assert err.count("\n") == 1 and err.endswith("\n"), err
    assert err.startswith(f"Error: {bad}:{line}: field '{field}': "), err
    assert fragment in err, err
    assert "Traceback" not in err
    assert _hash(seeded_store) == before


def test_the_good_files_do_load(seeded_store: Path, run_main) -> None:
    """The bad files are the good ones with one fault each; the good ones themselves load."""
    before = _hash(seeded_store)
    code, out, err = run_main("data", "add", str(GOOD_BIB), str(CORPUS / "good" / "fennwick-kcl.csv"),
                              str(CORPUS / "good" / "fennwick-pitzer.params.csv"), "--format", "json",
                              store=seeded_store)
    assert (code, err) == (0, ""), err
    added = json.loads(out)["added"]
    assert "source fennwick-2026" in added
    assert "dataset fennwick-kcl" in added
    assert "parameter set fennwick-bench-pitzer" in added
    assert _hash(seeded_store) != before
    with_data = _hash(seeded_store)
    code, out, err = run_main("readings", "add", str(GOOD_BIB),
                              str(CORPUS / "good" / "fennwick-kcl-aw.readings.csv"), "--format", "json",
                              store=seeded_store)
    assert (code, err) == (0, ""), err
    assert json.loads(out)["added"] == ["measurement set fennwick-kcl-aw.readings"]
    assert _hash(seeded_store) != with_data


# -- plugin files -----------------------------------------------------------------------------
# file -> fragment of the error the warning must carry (the plugin is named by its file stem)
PLUGIN_CASES = {
    "syntax_error.py": "failed to import: SyntaxError",
    "import_error.py": "failed to import: ModuleNotFoundError",
    "unknown_hook.py": "implements unknown hook(s) register_modles",
    "bad_model_id.py": "bad model 'Bad_Model': id 'Bad_Model' must be lower-case words joined by hyphens",
    "duplicate_model_id.py": "duplicate model id 'pitzer' (already registered by plugin pitzer); ignored",
    "not_a_list.py": "register_models returned Lonely, not a list",
    "raising_hook.py": "register_models raised RuntimeError('corpus plugin refuses to register')",
}


@pytest.fixture(scope="module")
def builtin_models() -> list[tuple[str, str]]:
    """The model listing with no extra plugin, to compare against."""
    from saltbench.models.discovery import build_registry

    reg = build_registry(use_environment=False)
    assert not reg.problems, reg.problems
    return sorted((info.model.id, info.plugin) for info in reg.models.values())


@pytest.mark.parametrize("name", list(PLUGIN_CASES))
def test_broken_plugin_is_named_and_the_others_keep_working(name: str, builtin_models, run_main) -> None:
    path = CORPUS / "plugins" / name
    code, out, err = run_main("--plugin", str(path), "models", "--format", "json")
    assert code == 0, err
    warnings = [ln for ln in err.splitlines() if ln.startswith("Warning: ")]
    assert len(warnings) == 1, err
    assert warnings[0].startswith(f"Warning: plugin {path.stem} ({path}): "), warnings[0]
    assert PLUGIN_CASES[name] in warnings[0]
    listed = sorted((r["id"], r["plugin"]) for r in json.loads(out))
    # every built-in model is there, from its own plugin (a duplicate id does not displace it),
    # and nothing from the broken file
    assert listed == builtin_models


def test_every_plugin_file_in_the_corpus_is_exercised() -> None:
    from test_robust_plugins import EVAL_CASES

    on_disk = {p.name for p in (CORPUS / "plugins").glob("*.py")}
    assert on_disk == set(PLUGIN_CASES) | set(EVAL_CASES)


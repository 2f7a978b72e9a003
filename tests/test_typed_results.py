"""Flags, verdicts and recommendations are values from the fit to every writer: code decides on
their kinds, and their wording is made in one place (``saltbench.fitting.flags.describe``,
``Verdict.text``, ``Recommendation.statement``). The wordings below are the ones users have
always read (tests/golden/ holds them in full); common practice, no source."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import saltbench.fitting.flags as flags_module
from saltbench.cli.compare import short_verdict
from saltbench.comparison.outcome import ModelOutcome, Verdict, VerdictKind
from saltbench.comparison.ranking import Recommendation, RecommendationKind, recommend, verdict
from saltbench.fitting.flags import NOTE_KINDS, Flag, FlagKind, flag
from saltbench.fitting.validity import ValidityRange

ROOT = Path(__file__).resolve().parents[1]

#: Every kind, with the values it carries and the text it must read as.
WORDING = {
    FlagKind.DID_NOT_CONVERGE: ({"detail": "max evaluations"}, "did not converge: max evaluations"),
    FlagKind.STEPS_REJECTED: ({"detail": "NaN"}, "model failed at some trial parameters (steps rejected): NaN"),
    FlagKind.MODEL_ERROR: ({"detail": "boom"}, "model error: boom"),
    FlagKind.TOO_FEW_POINTS: ({"n_points": 2, "n_params": 3}, "too few points (2 points for 3 free parameters)"),
    FlagKind.SINGULAR: ({"names": ("a", "b")}, "singular (the data carry no information on a, b)"),
    FlagKind.SINGULAR_COMBINATION: ({"names": ("b", "c")}, "singular (no information on a combination of b, c)"),
    FlagKind.ILL_CONDITIONED: ({"condition_number": 1.23456e7}, "ill-conditioned (condition number 1.23e+07)"),
    FlagKind.AT_BOUND: ({"name": "a", "side": "upper", "bound": 10.0}, "parameter a at bound (upper = 10)"),
    FlagKind.SEVERAL_MINIMA: (
        {"chi2_first": 1132.0, "chi2": 28.55, "first": {"a": 2.638}, "start": {"a": 20.0},
         "found": {"a": 5.786}},
        "several minima: from the usual start the fit stopped at chi2 1132 (a = 2.638); started at "
        "a = 20 it reached 28.55 (a = 5.786), which is kept"),
    FlagKind.TOO_FEW_TO_JUDGE: ({"n_points": 4, "n_params": 2},
                                "too few points to judge a refitted model (4 points for 2 free parameters)"),
    FlagKind.TRIAL_FAILED: ({"limit": 2.5, "detail": "model error: x"}, "at trial limit 2.5 mol/kg: model error: x"),
    FlagKind.DATA_END: ({"top": 6.0}, "data end before model fails (highest data molality 6 mol/kg)"),
    FlagKind.SPARSE: ({"low": 2.0, "high": 10.0}, "data too sparse to judge between 2 and 10 mol/kg"),
    FlagKind.FOLD_TOO_FEW: ({"fold": 2, "folds": 5, "n_points": 3, "n_params": 3},
                            "fold 2/5: too few points (3 for 3 free parameters)"),
    FlagKind.FOLD_UNSOLVED: ({"fold": 1, "folds": 5, "reason": "singular (x)"}, "fold 1/5: singular (x)"),
    FlagKind.FOLD_NOT_CONVERGED: ({"fold": 3, "folds": 5, "detail": "max steps"},
                                  "fold 3/5: did not converge: max steps"),
    FlagKind.FOLD_HELDOUT_ERROR: ({"fold": 4, "folds": 5, "detail": "nan"},
                                  "fold 4/5: model error on held-out points: nan"),
    FlagKind.DETERMINATION_HELDOUT: (
        {"worst": 0.0234, "quantity": "osmotic", "tolerance": 0.01},
        "determination: held out, points are predicted to within 0.023 in phi, beyond the tolerance 0.01: the "
        "data determine the parameters poorly (gaps or too few points); expect predictions within that band, "
        "not the tolerance"),
    FlagKind.DETERMINATION_STDERR: ({"name": "beta2", "value": -37.23, "stderr": 51.9},
                                    "determination: beta2 = -37.2 ± 52, standard error above its value"),
    FlagKind.AUTHORS_TEMPERATURE: ({"model_name": "Davies", "low": 273.15, "high": 323.15, "temperature": 350.0},
                                   "authors: Davies is claimed for 273.15 to 323.15 K; used at 350 K"),
    FlagKind.AUTHORS_MOLALITY: (
        {"model_name": "Davies", "claim": 0.5, "electrolyte": "NaCl", "note": "I below 0.5", "top": 6.0},
        "authors: Davies is claimed to 0.5 mol/kg for NaCl (I below 0.5); the data here reach 6 mol/kg"),
    FlagKind.PUBLISHED_TEMPERATURE: (
        {"set_id": "set-1", "set_temperature": 298.15, "temperature": 310.0, "constant": "A_phi of water"},
        "published: set-1 holds values for 298.15 K; judged at 310 K with them unchanged (A_phi of water): an "
        "extrapolation in temperature"),
    FlagKind.PUBLISHED_TEMPERATURE_RANGE: (
        {"set_id": "set-1", "low": 273.15, "high": 323.15, "temperature": 348.15},
        "published: set-1's temperature form covers 273.15-323.15 K; judged at 348.15 K: an "
        "extrapolation in temperature"),
    FlagKind.PUBLISHED_ANCHORING: (
        {"set_id": "set-1", "dataset": "MgSO4.gamma_pm.rs", "offset": -0.1123, "spread": 0.004, "low": 0.1,
         "high": 3.0, "scale": 0.8938, "phi_gap": 0.0061},
        "published: set-1 and MgSO4.gamma_pm.rs differ by a near-constant -0.112 in ln gamma± (spread 0.004) "
        "over 0.1 to 3 mol/kg: they anchor the dilute end differently (gamma± scaled by 0.894), not the shape; "
        "in phi the set and the osmotic data agree within 0.006; a refit absorbs this into its dilute "
        "parameters"),
}


@pytest.mark.parametrize("kind", list(FlagKind))
def test_each_flag_kind_reads_as_documented(kind: FlagKind) -> None:
    data, text = WORDING[kind]
    f = flag(kind, **data)
    assert f.text == str(f) == flags_module.describe(f) == text


def test_an_anchoring_flag_without_osmotic_data_says_nothing_of_phi() -> None:
    data = {**WORDING[FlagKind.PUBLISHED_ANCHORING][0], "phi_gap": None}
    assert "in phi" not in flag(FlagKind.PUBLISHED_ANCHORING, **data).text


def test_notes_are_the_kinds_that_do_not_unrank() -> None:
    assert {k for k in FlagKind if not flag(k).blocks_ranking} == NOTE_KINDS
    assert FlagKind.AT_BOUND not in NOTE_KINDS and FlagKind.DETERMINATION_STDERR in NOTE_KINDS


def _outcome(model: str, flags: list[Flag], reach: float | None = 2.0, limited_by: str = "tolerance",
             range_flags: list[Flag] | None = None, heldout: float = 0.005, n_params: int = 2) -> ModelOutcome:
    valid = ValidityRange(reach, reach, limited_by, None, {"ln_gamma": 0.01, "osmotic": 0.01}, "refit",  # type: ignore[arg-type]
                          reach or 1.0, list(range_flags or []))
    fit = {"aicc": 10.0, "residuals": {"n_points": 20}}
    held = {"held_out": {"ln_gamma": {"rms": heldout}}}
    return ModelOutcome("NaCl", model, model.title(), "saltbench", n_params, fit, held, valid, None, None, False,
                        flags=list(flags))


def test_the_ranking_decides_on_kinds_not_on_wording(monkeypatch) -> None:
    # every flag now reads like a note, and like the prefixes the old code looked for: the ranking
    # must not notice
    monkeypatch.setattr(flags_module, "describe", lambda f: "determination: data end published: authors:")
    bound = _outcome("bounded", [flag(FlagKind.AT_BOUND, name="a", side="lower", bound=1.0)], n_params=1)
    noted = _outcome("noted", [flag(FlagKind.DETERMINATION_STDERR, name="b", value=1.0, stderr=2.0)])
    rec = recommend([bound, noted], 2.0)
    assert not bound.usable and noted.usable
    assert rec.model == "noted" and rec.kind is RecommendationKind.RECOMMENDED
    assert bound.verdict.kind is VerdictKind.NOT_RANKED and noted.verdict.kind is VerdictKind.WHOLE_RANGE


def test_verdicts_are_kinds_with_their_numbers_and_one_wording() -> None:
    sparse = flag(FlagKind.SPARSE, low=2.0, high=5.0)
    whole = verdict(_outcome("a", [], reach=6.0, limited_by="data", range_flags=[sparse]), 6.0)
    assert (whole.kind, whole.reach, whole.data_end, whole.sparse) == (VerdictKind.WHOLE_RANGE, 6.0, True, (sparse,))
    assert whole.text == ("within tolerance over the whole range, to 6 mol/kg (the data end before the model "
                          "fails); data too sparse to judge between 2 and 5 mol/kg")
    part = verdict(_outcome("b", [], reach=1.5), 6.0)
    assert part.kind is VerdictKind.PART_RANGE and part.text == "within tolerance only up to 1.5 mol/kg"
    few = flag(FlagKind.TOO_FEW_TO_JUDGE, n_points=3, n_params=2)
    too_few = verdict(_outcome("c", [], reach=None, range_flags=[few]), 6.0)
    assert too_few.kind is VerdictKind.TOO_FEW_POINTS and too_few.text == few.text
    assert verdict(_outcome("d", [], reach=None), 6.0).text == "outside tolerance even at the lowest molality"
    failed = _outcome("e", [])
    failed.error = "TimeoutError: stopped"
    assert verdict(failed, 6.0) == Verdict(VerdictKind.FAILED, error="TimeoutError: stopped")
    assert verdict(failed, 6.0).text == "failed: TimeoutError: stopped"
    flagged = verdict(_outcome("f", [flag(FlagKind.MODEL_ERROR, detail="x"), flag(FlagKind.DATA_END, top=1.0)]), 6.0)
    assert flagged.text == "not ranked: model error: x"


def test_the_table_shortens_verdicts_by_kind(monkeypatch) -> None:
    o = _outcome("a", [], reach=6.0, limited_by="data")
    o.verdict = verdict(o, 6.0)
    monkeypatch.setattr(Verdict, "text", property(lambda self: "failed: not really"))
    assert short_verdict(o) == "whole range*"
    o.beyond_claim = 3.0
    assert short_verdict(o) == "whole range*†"
    o.verdict = Verdict(VerdictKind.NOT_RANKED, reasons=(flag(FlagKind.MODEL_ERROR, detail="x"),))
    assert short_verdict(o) == "flagged (below)"


def test_a_recommendation_is_worded_from_its_values_and_keeps_its_record() -> None:
    rec = Recommendation("NaCl", "pitzer", 6.0, most_accurate="sit", model_name="Pitzer", n_params=3,
                         most_accurate_name="SIT", heldout_model=0.004, heldout_most_accurate=0.0031)
    assert rec.statement == ("Pitzer [pitzer] is the simplest model within |d ln gamma±| <= 0.01 and |d phi| <= "
                             "0.01 up to 6 mol/kg (3 fitted parameter(s)) not materially less accurate than the "
                             "best; the most accurate is SIT [sit] (held-out RMS 0.0031 against 0.004).")
    d = rec.to_dict()
    assert list(d) == ["electrolyte", "model", "target_molality", "statement", "furthest_model",
                       "furthest_molality", "most_accurate", "kind"]
    assert d["kind"] == "recommended" and type(d["kind"]) is str
    far = Recommendation("CaCl2", None, 10.0, "pitzer", 2.5, kind=RecommendationKind.NONE_HOLDS,
                         furthest_name="Pitzer (binary)")
    assert far.statement.endswith("the furthest is Pitzer (binary) [pitzer], to 2.5 mol/kg.")


#: Wordings the old code parsed back; no module of the comparison, report or CLI may test a
#: string against them again.
PARSED_BEFORE = ("did not converge", "model error", "singular", "too few points", "data end", "data too sparse",
                 "published:", "determination:", "authors:", "failed:", "not ranked:", "within tolerance",
                 "outside tolerance")


def test_no_writer_parses_its_own_output_back() -> None:
    files = [*sorted((ROOT / "harness").rglob("*.py"))]
    found = []
    for path in files:
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr in ("startswith", "endswith", "__contains__")):
                for arg in node.args:
                    for c in ast.walk(arg):
                        if isinstance(c, ast.Constant) and isinstance(c.value, str) \
                                and c.value.startswith(PARSED_BEFORE):
                            found.append(f"{path.relative_to(ROOT)}:{node.lineno}: {c.value!r}")
    assert not found, found


def test_a_source_disagreement_is_a_value_worded_once() -> None:
    from saltbench.comparison.sources import SourceDisagreement

    d = SourceDisagreement("BaCl2.gamma_pm.a", "BaCl2.gamma_pm.b", "ln_gamma", 0.0184, 0.1, 1.0, 0.01)
    assert str(d) == d.text == ("BaCl2.gamma_pm.a and BaCl2.gamma_pm.b differ by up to 0.018 in ln gamma± at the "
                                "molalities both print (0.1 to 1 mol/kg), beyond the tolerance 0.01: no model can "
                                "stay within it of both; compare one of them with --data")

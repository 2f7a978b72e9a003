"""The compiled kernel of Pitzer's mixture equations (plugins/_pitzer_kernel.py, numba) against
the numpy path (plugins/_pitzer_mixture.py), and the thermodynamic identities through it.

numba is the optional extra ``fast``; CI installs it (.ci/run), and without it this module is
skipped: the numpy path, which every other test runs, is then the only one there is.

Equality: the two paths evaluate the same equations with the same coefficients; they differ in
the order of the sums and in exp and log (numpy's, and the kernel's own, which the compiler can
vectorise; within an ulp of numpy's, checked below). Each ln gamma is a sum of terms of order
one (the Debye-Hückel part, virial terms at molalities up to a few mol/kg) that may cancel to
near zero, so the check is relative to the size of the terms: 1e-12 relative, or 1e-13 absolute
for a value that is itself small (the rounding of terms of order one is about 1e-16 each; common
practice, no source). The identities below are facts of thermodynamics (sources in
tests/test_model_pitzer_mixture.py), checked here with the kernel forced on.
"""

from __future__ import annotations

import logging
import os
import subprocess
import sys

import numpy as np
import pytest

pytest.importorskip("numba")

import test_model_pitzer_mixture as identities  # noqa: E402

import saltbench.plugins  # noqa: E402
import saltbench.plugins._pitzer_choice as choice  # noqa: E402
import saltbench.plugins._pitzer_kernel as kernel  # noqa: E402
from saltbench.chemistry.ions import KNOWN_IONS  # noqa: E402
from saltbench.chemistry.solution import Composition  # noqa: E402
from saltbench.errors import UserError  # noqa: E402
from saltbench.models.contract import Conditions, ParameterKey, Request  # noqa: E402
from saltbench.models.evaluate import compute  # noqa: E402
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma  # noqa: E402
from saltbench.plugins.pitzer import Pitzer  # noqa: E402
from saltbench.water import debye_huckel_constants, with_a_phi  # noqa: E402

MODEL = Pitzer()
DH = with_a_phi(debye_huckel_constants(298.15), 0.392, "Pitzer and Mayorga (1973)")
# ions of charges 1 to 3 on both sides, so that Etheta has the types 1-2, 1-3 and 2-3; and ions
# of charge 1 only, so that it has none
UNLIKE = (("Na", "Mg", "La", "K", "Ca", "H"), ("Cl", "SO4", "PO4", "Br", "HCO3"))
LIKE = (("Na", "K", "H"), ("Cl", "Br", "HCO3"))


@pytest.fixture(autouse=True)
def _auto_choice(monkeypatch: pytest.MonkeyPatch) -> None:
    """Each test sets the choice it needs; none inherits one from the environment."""
    monkeypatch.delenv(choice.KERNEL_ENV, raising=False)


def _ions(rng: np.random.Generator, k: int, etheta: bool) -> tuple[str, ...]:
    """k ions, about half of them cations, in a random order: with ``etheta`` of unlike charges
    on each side from three ions on, else all of charge 1 (no unsymmetrical terms)."""
    cations, anions = UNLIKE if etheta else LIKE
    n_cat = (k + 1) // 2
    names = list(cations[:n_cat] + anions[:k - n_cat])
    rng.shuffle(names)
    return tuple(names)


def _composition(rng: np.random.Generator, names: tuple[str, ...], n: int) -> Composition:
    """n compositions at 0 to 3 mol/kg per ion (invented), about a fifth of the entries 0 and,
    among many rows, one row of pure water (every molality 0)."""
    m = rng.uniform(0.0, 3.0, (n, len(names)))
    m[rng.uniform(size=m.shape) < 0.2] = 0.0
    if n > 2:
        m[1] = 0.0
    return Composition(tuple(KNOWN_IONS[f] for f in names), m, np.full(n, 298.15))


def _values(rng: np.random.Generator, comp: Composition, n_sets: int, per_row: bool
            ) -> dict[ParameterKey, np.ndarray]:
    """Invented parameters of the published sizes (as tests/test_model_pitzer_mixture.py), S
    sets, and with ``per_row`` beta0, theta, psi, alpha1 and b given a value per row (a
    temperature form)."""
    out = {}
    cols = comp.n if per_row else 1
    for key in MODEL.keys_for(comp):
        if key.name == "alpha1":
            v = rng.uniform(1.0, 3.0, (n_sets, cols)) if per_row else np.zeros((n_sets, 1))
        elif key.name == "alpha2":
            v = np.zeros((n_sets, 1))  # 0: the charge-type value
        elif key.name == "b":
            v = rng.uniform(1.0, 1.4, (n_sets, cols)) if per_row else np.full((n_sets, 1), 1.2)
        elif key.name == "beta1":
            v = rng.uniform(0.2, 3.0, (n_sets, 1))
        elif key.name == "beta2":
            v = rng.uniform(-50.0, -20.0, (n_sets, 1))
        elif key.name in ("beta0", "theta", "psi"):
            scale = 0.02 if key.name == "psi" else 0.1
            v = rng.normal(0.0, scale, (n_sets, cols))
        else:
            v = rng.normal(0.0, 0.002 if key.name == "C_phi" else 0.1, (n_sets, 1))
        out[key] = v
    return out


def _all(comp: Composition) -> tuple:
    return tuple(ln_gamma(n) for n in comp.names) + (OSMOTIC, WATER_ACTIVITY)


def _both(request: Request, monkeypatch: pytest.MonkeyPatch) -> tuple[dict, dict]:
    """(numpy values, compiled values) of one request; the kernel must have run, once."""
    calls = []
    real = kernel.evaluate
    monkeypatch.setattr(kernel, "evaluate", lambda *a: (calls.append(1), real(*a))[1])
    monkeypatch.setenv(choice.KERNEL_ENV, "numpy")
    ref = MODEL.compute(request).values
    assert not calls
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    got = MODEL.compute(request).values
    monkeypatch.delenv(choice.KERNEL_ENV)
    assert calls == [1], "the compiled kernel did not run"
    return ref, got


def _assert_equal(ref: dict, got: dict) -> None:
    for q in ref:
        assert np.all(np.isfinite(got[q])), q
        np.testing.assert_allclose(got[q], ref[q], rtol=1e-12, atol=1e-13, err_msg=str(q))


# -- the two paths --------------------------------------------------------------------------------
CASES = [(k, etheta) for k in range(2, 8) for etheta in (True, False) if etheta or k <= 6]


@pytest.mark.parametrize("k,etheta", CASES)
@pytest.mark.parametrize("n", [1, 3, kernel.BLOCK + 44])
def test_compiled_equals_numpy(k, etheta, n, monkeypatch):
    # 2 to 7 ions, with and without unsymmetrical terms; one composition, a few, and a block of
    # the kernel's and part of another; one parameter set, three, and two with values per row
    rng = np.random.default_rng(1000 * k + 10 * n + etheta)
    comp = _composition(rng, _ions(rng, k, etheta), n)
    charges = [sorted({abs(c) for c in comp.charges if np.sign(c) == side}) for side in (1, -1)]
    assert any(len(c) > 1 for c in charges) == (etheta and k >= 3)
    for n_sets, per_row in ((1, False), (3, False), (2, True)):
        values = _values(rng, comp, n_sets, per_row)
        request = Request(comp, _all(comp), values, Conditions.single(DH, n))
        ref, got = _both(request, monkeypatch)
        _assert_equal(ref, got)


def test_the_unsymmetrical_terms_are_in_both_paths(monkeypatch):
    # NaCl + MgCl2 with theta = psi = 0: the difference Etheta makes to ln gamma(Na+) (1-2
    # mixing, Pitzer 1975) is the same in both paths, and not small
    import saltbench.plugins._pitzer_mixture as mix

    names = ("Na", "Mg", "Cl")
    m = np.array([[1.0, 0.5, 2.0], [0.1, 0.05, 0.2], [3.0, 1.0, 5.0]])
    comp = Composition(tuple(KNOWN_IONS[f] for f in names), m, np.full(3, 298.15))
    values = {key: np.zeros((1, 1)) if key.name in ("theta", "psi") else v
              for key, v in _values(np.random.default_rng(5), comp, 1, False).items()}
    request = Request(comp, _all(comp), values, Conditions.single(DH, 3))
    ref, got = _both(request, monkeypatch)
    _assert_equal(ref, got)
    real = mix.etheta
    monkeypatch.setattr(mix, "etheta", lambda zi, zj, i, a: (np.zeros_like(i), np.zeros_like(i)))
    monkeypatch.setenv(choice.KERNEL_ENV, "numpy")
    without = MODEL.compute(request).values
    monkeypatch.setattr(mix, "etheta", real)
    assert np.abs(got[ln_gamma("Na+")] - without[ln_gamma("Na+")]).min() > 1e-3


def test_many_compositions_in_several_blocks(monkeypatch):
    # the seven ions of the benchmark, 10 007 rows (not a multiple of the kernel's block)
    rng = np.random.default_rng(7)
    names = ("Na", "K", "Mg", "Ca", "Cl", "SO4", "HCO3")
    comp = _composition(rng, names, 10_007)
    for n_sets, per_row in ((1, False), (2, True)):
        request = Request(comp, _all(comp), _values(rng, comp, n_sets, per_row),
                          Conditions.single(DH, comp.n))
        _assert_equal(*_both(request, monkeypatch))


def test_rows_at_their_own_temperatures(monkeypatch):
    # Conditions.of: each row's A_phi from IAPWS water at its temperature (0 to 90 °C)
    rng = np.random.default_rng(9)
    names = ("Na", "Ca", "Cl", "SO4")
    m = rng.uniform(0.0, 2.0, (40, 4))
    comp = Composition(tuple(KNOWN_IONS[f] for f in names), m, np.linspace(273.15, 363.15, 40))
    request = Request(comp, _all(comp), _values(rng, comp, 1, False), Conditions.of(comp))
    _assert_equal(*_both(request, monkeypatch))


def test_derivatives_are_those_of_the_numpy_path(monkeypatch):
    # derivatives come from numpy on both paths; the values beside them from the kernel
    comp = Composition(identities.SEA_IONS, identities.SEA_M, np.full(2, 298.15))
    values = identities._values(comp)
    request = Request(comp, _all(comp), values, Conditions.single(DH, 2), tuple(values))
    monkeypatch.setenv(choice.KERNEL_ENV, "numpy")
    ref = MODEL.compute(request)
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    got = MODEL.compute(request)
    for q in ref.derivatives:
        for key in ref.derivatives[q]:
            np.testing.assert_array_equal(got.derivatives[q][key], ref.derivatives[q][key])


def test_the_kernels_exp_and_log_are_numpys_to_an_ulp():
    # numpy's exp, log and log1p as the reference (a general-purpose library), over the range
    # of double precision and the arguments the kernel gives them (x = -alpha sqrt(I) down to
    # about -100, logarithms of 6 A_phi sqrt(I) and of 1 + b sqrt(I), tiny ones included)
    rng = np.random.default_rng(11)
    x = np.concatenate([rng.uniform(-708.0, 709.0, 20_000), rng.uniform(-100.0, 5.0, 20_000),
                        rng.uniform(-1e-3, 1e-3, 1000), [0.0, -708.0, 709.0, 1.0, -1.0]])
    y = np.concatenate([np.exp(rng.uniform(-700.0, 700.0, 20_000)), rng.uniform(0.0, 20.0, 20_000),
                        10.0 ** rng.uniform(-300.0, -1.0, 2000), [1.0, 2.0, 0.5, np.sqrt(2.0)]])
    ex, lg, lp = np.empty_like(x), np.empty_like(y), np.empty_like(y)
    kernel.exp_and_log(x, y, ex, lg, lp)
    for got, ref in ((ex, np.exp(x)), (lg, np.log(y)), (lp, np.log1p(y))):
        ulps = np.abs(got - ref) / np.spacing(np.maximum(np.abs(ref), np.finfo(float).tiny))
        assert ulps.max() <= 2.0
    # where e^x is no longer a normal number: 0 (below e^-708, about 3e-308), and inf above 709
    out = np.empty(3)
    kernel.exp_and_log(np.array([-709.0, -1000.0, 710.0]), np.ones(1), out, np.empty(1), np.empty(1))
    assert out[0] == 0.0 and out[1] == 0.0 and out[2] == np.inf


# -- the identities through the kernel ------------------------------------------------------------
@pytest.mark.parametrize("check", [
    identities.test_cross_differentials_of_every_ion_pair,
    identities.test_gibbs_duhem_by_finite_differences,
    identities.test_osmotic_coefficient_from_the_dilution_integral,
    identities.test_the_limiting_law_for_every_ion,
    identities.test_cross_differentials_and_gibbs_duhem_hold_for_random_brines,
], ids=lambda f: f.__name__)
def test_thermodynamic_identities_hold_through_the_kernel(check, monkeypatch):
    calls = []
    real = kernel.evaluate
    monkeypatch.setattr(kernel, "evaluate", lambda *a: (calls.append(1), real(*a))[1])
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    check()
    assert calls


# -- when each path runs --------------------------------------------------------------------------
def _sea(n: int) -> Request:
    rng = np.random.default_rng(3)
    comp = _composition(rng, ("Na", "Mg", "Cl", "SO4"), n)
    return Request(comp, _all(comp), _values(rng, comp, 1, False), Conditions.single(DH, n))


def test_large_requests_take_the_kernel_once_numpy_has_cost_about_its_loading(monkeypatch):
    calls = []
    real = kernel.evaluate
    monkeypatch.setattr(kernel, "evaluate", lambda *a: (calls.append(a[3].shape[0]), real(*a))[1])
    fresh = choice._Kernel()
    monkeypatch.setattr(choice, "KERNEL", fresh)
    monkeypatch.setattr(choice, "KERNEL_AFTER_ROWS", 2 * choice.KERNEL_MIN_ROWS)
    MODEL.compute(_sea(choice.KERNEL_MIN_ROWS - 1))  # small: never counted, never compiled
    assert fresh.numpy_rows == 0
    MODEL.compute(_sea(choice.KERNEL_MIN_ROWS))
    MODEL.compute(_sea(choice.KERNEL_MIN_ROWS))
    assert calls == [] and fresh.numpy_rows == 2 * choice.KERNEL_MIN_ROWS and not fresh.tried
    MODEL.compute(_sea(choice.KERNEL_MIN_ROWS))  # the rent is paid: the kernel from now on
    MODEL.compute(_sea(choice.KERNEL_MIN_ROWS - 1))  # small ones still take numpy
    assert calls == [choice.KERNEL_MIN_ROWS]
    monkeypatch.setenv(choice.KERNEL_ENV, "numpy")
    MODEL.compute(_sea(choice.KERNEL_MIN_ROWS))
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    MODEL.compute(_sea(1))
    assert calls == [choice.KERNEL_MIN_ROWS, 1]


def test_an_unknown_choice_is_refused_in_one_line(monkeypatch):
    monkeypatch.setenv(choice.KERNEL_ENV, "fastest")
    with pytest.raises(UserError, match=r"SALTBENCH_KERNEL='fastest': use one of auto, numpy, compiled"):
        compute(MODEL, _sea(2))


def test_a_kernel_that_cannot_compile_leaves_the_numpy_path(monkeypatch, caplog):
    # numba may be installed and still unable to compile (an unsupported processor or library):
    # the first failure sends the process to numpy, said only at debug level
    fresh = choice._Kernel()
    monkeypatch.setattr(choice, "KERNEL", fresh)

    class Broken:
        @staticmethod
        def evaluate(*args):
            raise RuntimeError("no code for this processor")

    fresh.tried, fresh.module = True, Broken  # type: ignore[assignment]
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    request = _sea(5)
    with caplog.at_level(logging.DEBUG, logger=choice.__name__):
        got = MODEL.compute(request).values
    assert fresh.module is None
    assert "no code for this processor" in caplog.text
    assert all(r.levelno == logging.DEBUG for r in caplog.records)
    monkeypatch.setenv(choice.KERNEL_ENV, "numpy")
    ref = MODEL.compute(request).values
    for q in ref:
        np.testing.assert_array_equal(got[q], ref[q])
    # once a call has succeeded, a failure is a fault and is raised
    proven = choice._Kernel()
    proven.tried, proven.module, proven.proven = True, Broken, True  # type: ignore[assignment]
    monkeypatch.setattr(choice, "KERNEL", proven)
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    with pytest.raises(RuntimeError, match="no code for this processor"):
        MODEL.compute(request)


def test_without_numba_the_numpy_path_runs(monkeypatch, caplog):
    fresh = choice._Kernel()
    monkeypatch.setattr(choice, "KERNEL", fresh)
    monkeypatch.setitem(sys.modules, "numba", None)  # import numba now raises ImportError
    monkeypatch.delitem(sys.modules, "saltbench.plugins._pitzer_kernel")
    monkeypatch.delattr(saltbench.plugins, "_pitzer_kernel")
    monkeypatch.setenv(choice.KERNEL_ENV, "compiled")
    with caplog.at_level(logging.DEBUG, logger=choice.__name__):
        got = MODEL.compute(_sea(4)).values
    assert fresh.tried and fresh.module is None
    assert "ModuleNotFoundError" in caplog.text and "numba" in caplog.text
    monkeypatch.setenv(choice.KERNEL_ENV, "numpy")
    ref = MODEL.compute(_sea(4)).values
    for q in ref:
        np.testing.assert_array_equal(got[q], ref[q])


# -- start-up and numba's cache (subprocesses) ----------------------------------------------------
def _python(code: str, **env: str) -> subprocess.CompletedProcess:
    environ = {k: v for k, v in os.environ.items() if k != choice.KERNEL_ENV}
    return subprocess.run([sys.executable, *code.split("\0")], capture_output=True, text=True,
                          env={**environ, **env}, timeout=600)


def test_the_command_line_starts_without_numba():
    proc = _python("-X\0importtime\0-m\0saltbench\0--help")
    assert proc.returncode == 0, proc.stderr
    imported = [line.rsplit("|", 1)[-1].strip() for line in proc.stderr.splitlines()
                if line.startswith("import time:")]
    assert "saltbench.cli" in imported  # the listing is the one asked for
    assert not [name for name in imported if name.split(".")[0] in ("numba", "llvmlite")]


SMALL_AND_LARGE = """
import sys
import numpy as np
from saltbench.chemistry.ions import KNOWN_IONS
from saltbench.chemistry.solution import Composition
from saltbench.models.contract import Conditions, Request
from saltbench.models.quantities import OSMOTIC
from saltbench.plugins.pitzer import Pitzer
from saltbench.water import debye_huckel_constants
import saltbench.plugins._pitzer_choice as choice

model = Pitzer()
ions = tuple(KNOWN_IONS[f] for f in ("Na", "Mg", "Cl", "SO4"))

def run(n):
    m = np.linspace(0.1, 2.0, n)[:, None] * np.array([1.0, 0.1, 1.1, 0.1])
    comp = Composition(ions, m, np.full(n, 298.15))
    values = {k: np.array([[p.default if p.fixed else 0.05]]) for k, p in model.keys_for(comp).items()}
    return model.compute(Request(comp, (OSMOTIC,), values, Conditions.single(debye_huckel_constants(298.15), n)))

run(50)
print("after small:", "numba" in sys.modules)
run(choice.KERNEL_MIN_ROWS)
print("after one large:", "numba" in sys.modules)
choice.KERNEL_AFTER_ROWS = choice.KERNEL_MIN_ROWS
out = run(choice.KERNEL_MIN_ROWS)
print("after large:", "numba" in sys.modules, choice.KERNEL.module is not None and choice.KERNEL.proven)
"""


def test_numba_is_imported_only_once_large_requests_have_paid_for_it():
    proc = _python("-c\0" + SMALL_AND_LARGE)
    assert proc.returncode == 0, proc.stderr
    assert "after small: False" in proc.stdout
    assert "after one large: False" in proc.stdout  # numpy's cost has not reached the loading's
    assert "after large: True True" in proc.stdout
    assert not proc.stderr.strip()  # no warning of numba's on the user's screen


def test_without_a_writable_cache_the_kernel_compiles_and_runs():
    # numba refuses cache=True where it finds no writable place for its cache (it tries beside
    # the source, then its user-wide folder); NUMBA_CACHE_LOCATOR_CLASSES set to the one locator
    # that applies only to zipped sources puts numba in that state here
    proc = _python("-c\0" + SMALL_AND_LARGE, NUMBA_CACHE_LOCATOR_CLASSES="ZipCacheLocator")
    assert proc.returncode == 0, proc.stderr
    assert "after large: True True" in proc.stdout
    assert not proc.stderr.strip()

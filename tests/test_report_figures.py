"""The report's figures keep everything inside the frame: a legend of many or long model ids is
laid out in as many columns as fit, never cut at the figure's edges.

The residuals drawn here are SYNTHETIC (smooth made-up curves): these tests are about layout only.
"""

from __future__ import annotations

import io
from types import SimpleNamespace

import numpy as np
import pytest

from saltbench.models.discovery import build_registry
from saltbench.report import figures as F

# an in-house model id as long as a plugin might reasonably choose (invented)
LONG_ID = "kestrel-bay-in-house-extended-ion-interaction-model-2026"


@pytest.fixture(scope="module")
def model_ids() -> list[str]:
    return sorted(build_registry(use_environment=False).models)


def _edges_blank(png: bytes) -> bool:
    """Nothing drawn in the outermost two pixel columns and rows (a cut legend touches them)."""
    import matplotlib.image as mpimg

    rgb = mpimg.imread(io.BytesIO(png), format="png")[..., :3]
    edges = np.concatenate([rgb[:, :2].reshape(-1, 3), rgb[:, -2:].reshape(-1, 3),
                            rgb[:2].reshape(-1, 3), rgb[-2:].reshape(-1, 3)])
    return bool((edges > 0.99).all())


def _residual_png(ids: list[str]) -> bytes:
    m = np.geomspace(0.01, 3.0, 12)
    kind = np.array(["ln_gamma", "osmotic"] * 6)
    outcomes = [SimpleNamespace(model=mid) for mid in ids]
    residuals = {("NaCl", mid): SimpleNamespace(molality=m, kind=kind,
                                                residual=0.004 * (i + 1) * np.sin(3 * m))
                 for i, mid in enumerate(ids)}
    settings = SimpleNamespace(tol_ln_gamma=0.01, tol_phi=0.01)
    fig = F.residual_figure("NaCl", outcomes, residuals, settings, F.model_styles(ids), "nacl")
    return fig.png


def test_every_builtin_model_in_the_residual_legend_stays_inside_the_figure(model_ids) -> None:
    assert len(model_ids) >= 14  # the bundle's models, so the legend is as long as in a report
    assert _edges_blank(_residual_png(model_ids))


def test_a_long_in_house_model_id_stays_inside_the_figure(model_ids) -> None:
    assert _edges_blank(_residual_png([*model_ids, LONG_ID]))


def _columns(leg, renderer) -> int:
    """Columns of a drawn legend: the distinct left edges of its labels."""
    return len({round(t.get_window_extent(renderer).x0) for t in leg.get_texts()})


def test_legend_takes_as_many_columns_as_fit() -> None:
    plt = F._pyplot()
    with plt.rc_context(F.RC):
        fig, ax = plt.subplots(figsize=(F.WIDTH_IN, 3), layout="constrained")
        short = [f"m{i}" for i in range(7)]
        handles = [ax.plot([0, 1], [i, i])[0] for i in range(7)]
        renderer = fig.canvas.get_renderer()
        leg = F.legend_below(fig, handles, short, most=5)
        fig.canvas.draw()
        assert _columns(leg, renderer) == 5
        leg.remove()
        wide = [f"{LONG_ID}-{i}" for i in range(7)]
        leg = F.legend_below(fig, handles, wide, most=5)
        fig.canvas.draw()
        assert 1 <= _columns(leg, renderer) < 5
        assert leg.get_window_extent(renderer).width <= fig.bbox.width
        plt.close(fig)

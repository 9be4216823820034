"""Fixtures shared by test modules: headless pyplot, the widgets layer, the figure-leak
check and the demo designs from their files in designs/."""

from pathlib import Path

import pytest

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parents[1] / "designs"


@pytest.fixture(scope="module")
def kestrel_a():
    return ir.load_design(DESIGNS / "kestrel_a.toml")


@pytest.fixture(scope="module")
def kestrel_b():
    return ir.load_design(DESIGNS / "kestrel_b.toml")


@pytest.fixture(scope="module")
def plt():
    """pyplot on the Agg backend (headless)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as pyplot

    return pyplot


@pytest.fixture(scope="module")
def irw(plt):
    import inertia_review.widgets as widgets_layer

    return widgets_layer


@pytest.fixture
def no_figure_leak(plt):
    """Widgets draw on their own Agg figures: none may be registered with pyplot (a leak
    would grow with every slider move). Widgets made by a test are closed afterwards."""
    import ipywidgets

    assert plt.get_fignums() == [], f"figures leaked into this test: {plt.get_fignums()}"
    yield
    leaked = plt.get_fignums()
    plt.close("all")
    ipywidgets.Widget.close_all()
    assert leaked == [], f"the widgets left pyplot figures open: {leaked}"


@pytest.fixture
def close_figures(plt):
    """Close every figure and widget after a test that may draw through pyplot itself."""
    import ipywidgets

    yield
    plt.close("all")
    ipywidgets.Widget.close_all()

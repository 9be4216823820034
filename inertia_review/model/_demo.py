"""The invented demo designs shipped inside the package (private).

The design files live in ``inertia_review/data/designs/`` (package data, so they are present
after a plain ``pip install``); the repository's top-level ``designs/`` holds links to them.
All of them are invented demo data for the fictional "Kestrel Optics" scenario.
"""

from importlib import resources
from pathlib import Path

from ._design_io import load_design

__all__ = ["demo_designs", "demo_design", "demo_design_path"]


def _folder():
    return resources.files("inertia_review").joinpath("data", "designs")


def demo_designs():
    """Names of the shipped demo designs, sorted (for example ``"kestrel_a"``).

    Returns
    -------
    tuple of str
    """
    return tuple(sorted(p.name[:-5] for p in _folder().iterdir() if p.name.endswith(".toml")))


def demo_design_path(name):
    """Path of the shipped design file ``name`` (copy it to start a design of your own).

    Raises
    ------
    ValueError
        When there is no demo design of that name; the message lists the names.
    """
    if not isinstance(name, str) or name not in demo_designs():
        raise ValueError(f"demo design: no design named {name!r}; the demo designs are "
                         f"{', '.join(demo_designs())}")
    return Path(str(_folder().joinpath(f"{name}.toml")))


def demo_design(name):
    """Load the shipped demo design ``name`` as an :class:`~inertia_review.Arm`.

    ``ir.demo_design("kestrel_a")`` equals ``ir.load_design(ir.demo_design_path("kestrel_a"))``;
    ``ir.demo_designs()`` lists the names. Invented demo data.
    """
    return load_design(demo_design_path(name))

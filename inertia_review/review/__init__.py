"""Review: the record of a design review (private layer).

Holds the fixed-precision baseline tables that nbval guards, executing, rebaselining and
rendering notebooks to HTML, the joint-range summary and the ``inertia-review`` command.

May import every other layer; nothing imports it except the package's ``__init__``.
"""

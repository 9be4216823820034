"""Model: designs as validated data (private layer; the public names live in the package).

Holds the design-file schema and its one validation vocabulary, design files (TOML in and out,
atomic writes), materials, rotations, parameter arrays, ``Arm``, the builders, parameter paths,
and the design file's ``[task]`` regions and ``[[cycles]]`` tables.

May import: ``core`` and itself. Never imports ``studies``, ``plots``, ``widgets`` or ``review``.
"""

"""The one exception type of design input (private module; import from the package)."""

__all__ = ["DesignError"]


class DesignError(ValueError):
    """A design (file or dict) breaks one or more rules of the schema.

    Every problem is listed at once, each with the field path (zero-based,
    such as ``joints[1].link.mass_kg``) and the rule it breaks.

    Attributes
    ----------
    design_name : str
        The design's name, or the file name where the name is unknown.
    problems : list of tuple of (str, str)
        ``(path, reason)`` pairs, in the order found.
    """

    def __init__(self, design_name, problems):
        self.design_name = str(design_name)
        self.problems = [(str(p), str(r)) for p, r in problems]
        count = len(self.problems)
        lines = [f"design '{self.design_name}' has {count} problem{'s' if count != 1 else ''}:"]
        lines += [f"  - {path}: {reason}" for path, reason in self.problems]
        super().__init__("\n".join(lines))

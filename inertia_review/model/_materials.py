"""Material densities and tube link properties (private).

Densities and formulas come from handbooks; each entry names its source.
"""

from typing import NamedTuple

import numpy as np

__all__ = ["MATERIALS", "MATERIAL_SOURCES", "TubeProperties", "tube_properties",
           "MODULI", "MODULUS_SOURCES", "tube_section_stiffness"]

#: Density [kg/m^3] of the shipped materials.
MATERIALS = {
    # Aluminum Association typical value for 6061-T6, 2.70 g/cm^3; Gere, Mechanics of
    # Materials, 5th ed., density table: 2,700 kg/m^3.
    "aluminium_6061": 2700.0,
    # EN 1993-1-1:2005 sec. 3.2.6 / EN 1991-1-1 Table A.4 (78.5 kN/m^3); Gere: 7,850 kg/m^3.
    "structural_steel": 7850.0,
    # Callister & Rethwisch, Fundamentals of Materials Science and Engineering, 3rd ed.
    # (Wiley 2008), Appendix B, Table B.1: continuous aligned carbon fibre/epoxy, Vf = 0.60,
    # 1.7 g/cm^3. Real laminates vary (1.6-1.7 g/cm^3 typical): override with density_kgm3.
    "cfrp": 1700.0,
}

#: Where each density comes from (shown in summaries and docs).
MATERIAL_SOURCES = {
    "aluminium_6061": "Aluminum Association typical data (6061-T6); Gere, Mechanics of Materials, 5th ed.",
    "structural_steel": "EN 1993-1-1:2005 sec. 3.2.6; EN 1991-1-1 Table A.4",
    "cfrp": "Callister & Rethwisch, 3rd ed. (2008), Table B.1 (carbon fibre/epoxy, Vf 0.6)",
}


class TubeProperties(NamedTuple):
    """Rigid-body properties of a round tube lying along +x of its link frame from the origin."""

    mass_kg: float
    com_m: tuple
    inertia_kgm2: tuple  # [Ixx, Iyy, Izz, Ixy, Ixz, Iyz] about the COM, link frame


def tube_properties(length_m, outer_diameter_m, wall_m, density_kgm3):
    """Mass, centre of mass and inertia tensor of a round tube.

    The tube lies along +x of the link frame, from the origin to ``length_m``.

    Parameters
    ----------
    length_m, outer_diameter_m, wall_m : float
        Length, outer diameter and wall thickness [m]; ``wall_m`` at most half the diameter
        (a solid bar).
    density_kgm3 : float
        Material density [kg/m^3].

    Returns
    -------
    TubeProperties
        ``mass_kg`` [kg], ``com_m`` (3,) [m] and ``inertia_kgm2`` (6,) [kg m^2] about the
        centre of mass in the link frame, as tensor entries [Ixx, Iyy, Izz, Ixy, Ixz, Iyz].

    Notes
    -----
    m = rho pi (R^2 - r^2) L; I_axial = m (R^2 + r^2) / 2;
    I_transverse = m [(R^2 + r^2) / 4 + L^2 / 12] about the centre, from the hollow-cylinder
    radii of gyration of Machinery's Handbook, 31st ed. (Industrial Press 2020), pp. 236-237.
    """
    length = float(length_m)
    outer = 0.5 * float(outer_diameter_m)
    inner = outer - float(wall_m)
    mass = float(density_kgm3) * np.pi * (outer**2 - inner**2) * length
    axial = mass * (outer**2 + inner**2) / 2.0
    transverse = mass * ((outer**2 + inner**2) / 4.0 + length**2 / 12.0)
    return TubeProperties(mass, (length / 2.0, 0.0, 0.0), (axial, transverse, transverse, 0.0, 0.0, 0.0))


# --- elastic moduli (stiffness of tube links) -------------------------------------------
#: Young's modulus E and shear modulus G [Pa] of the shipped materials, linear elastic,
#: room temperature. Status as in references.md: [C] confirmed, [D] derived, [M] from memory.
MODULI = {
    # Aluminum Association typical data for 6061-T6 (as in ASM Handbook vol. 2): E = 68.9 GPa
    # (10.0 Msi), G = 26 GPa (3.77 Msi). Status [M]: values quoted from memory.
    "aluminium_6061": (68.9e9, 26.0e9),
    # EN 1993-1-1:2005 sec. 3.2.6: E = 210 000 N/mm^2 [C], nu = 0.3 and
    # G = E / (2 (1 + nu)) ~= 81 000 N/mm^2 (80 769 exactly from E and nu) [D].
    "structural_steel": (210.0e9, 210.0e9 / 2.6),
    # Unidirectional carbon fibre/epoxy, Vf = 0.6, fibres along the tube: longitudinal
    # modulus 142 GPa (Callister & Rethwisch, Appendix B, Table B.2) [M]; in-plane shear
    # modulus about 5 GPa, a typical unidirectional value [M], no source checked. Laminated
    # tubes differ widely with the layup: give the link's own stiffness values instead.
    "cfrp": (142.0e9, 5.0e9),
}

#: Where each modulus comes from, with its status.
MODULUS_SOURCES = {
    "aluminium_6061": "Aluminum Association typical data, 6061-T6: E 68.9 GPa, G 26 GPa [M]",
    "structural_steel": "EN 1993-1-1:2005 sec. 3.2.6: E 210 GPa [C], nu 0.3, G = E/(2(1+nu)) [D]",
    "cfrp": "Callister & Rethwisch Table B.2, longitudinal E 142 GPa [M]; G 5 GPa typical [M]",
}


def tube_section_stiffness(outer_diameter_m, wall_m, youngs_Pa, shear_Pa):
    """Bending stiffness EI and torsional stiffness GJ of a round tube section [N m^2].

    I = pi (D^4 - d^4) / 64 (second moment of area about a diameter) and J = 2 I (polar
    moment; for a circular section the torsion constant equals it), d = D - 2 t:
    Gere, Mechanics of Materials, 5th ed., Appendix D (circle and circular ring) and
    sec. 3.3 (torsion of circular tubes); Roark's Formulas for Stress and Strain, 7th ed.,
    Table A.1 (hollow circle) and Table 10.1 case 1 [M].

    Returns
    -------
    (EI, GJ) : tuple of float
    """
    outer = float(outer_diameter_m)
    inner = outer - 2.0 * float(wall_m)
    second_moment = np.pi * (outer**4 - inner**4) / 64.0
    return float(youngs_Pa) * second_moment, float(shear_Pa) * 2.0 * second_moment

"""inertia_review: review the inertia, isotropy and torque headroom of robot-arm designs.

Core (arm-model.md): ``load_design``, ``save_design``, ``Arm`` and the metric
functions, which broadcast over leading axes of joint angles ``q`` (..., n) [rad].
SI units inside; degrees only in design files and on screen.
"""

from .core._api import (
                        acceleration_along,
                        acceleration_capability,
                        apparent_mass,
                        evaluate_metrics,
                        isotropy_index,
                        manipulability,
                        mass_along,
                        mass_ratio,
                        near_singular,
                        principal_masses,
                        torque_headroom,
)
from .core._api_stiffness import (
                        NaturalFrequencies,
                        PrincipalStiffnesses,
                        max_tool_speed,
                        natural_frequencies,
                        payload_capacity,
                        principal_stiffnesses,
                        tool_compliance,
                        tool_deflection,
                        tool_stiffness,
)
from .core._metrics import PrincipalMasses, TorqueHeadroom
from .model._arm import Arm
from .model._builders import planar_chain, yaw_pitch_pitch_arm
from .model._cycle_schema import MOVE_KINDS, Cycle, Move, cycle_from_dict, design_cycles
from .model._demo import demo_design, demo_design_path, demo_designs
from .model._design import STANDARD_GRAVITY
from .model._design_io import load_design, save_design
from .model._errors import DesignError
from .model._materials import (
                        MATERIAL_SOURCES,
                        MATERIALS,
                        MODULI,
                        MODULUS_SOURCES,
                        TubeProperties,
                        tube_properties,
                        tube_section_stiffness,
)
from .model._paths import parameter_paths
from .model._regions import (
                        Box,
                        PointSet,
                        Rectangle,
                        Task,
                        region_from_dict,
                        task_from_dict,
)
from .review._baselines import baseline_table, scores_view
from .studies._body_regions import BodyArea, BodyRegion, BodyRegions, load_body_regions
from .studies._contact_maps import SpeedCheck, check_speeds, contact_speed_map
from .studies._contact_model import (
                        ContactSpeed,
                        contact_speed,
                        permissible_speed,
                        pressure_speed_limit,
                        reduced_mass,
                        simplified_effective_mass,
                        transient_energy_limit,
                        transient_speed_limit,
)
from .studies._cycle_review import CycleTorques, cycle_torques
from .studies._datasheet import Datasheet, datasheet
from .studies._ik import SOLVED, STATUS, PositionSolution, solve_positions
from .studies._map_io import load_results, save_results
from .studies._maps import METRIC_ATTRS, metric_map
from .studies._profiles import MotionProfile, s_curve_profile, trapezoidal_profile
from .studies._scores import SCORE_COLUMNS, design_scores, scores_table
from .studies._search import DesignSearch, pareto_mask
from .studies._sensitivity import global_sensitivity, one_at_a_time
from .studies._sweeps import Sweep
from .studies._variants import score_variants

__version__ = "0.1.0"

__all__ = [
    # design model and files
    "Arm", "load_design", "save_design", "DesignError",
    # the invented demo designs shipped with the package
    "demo_designs", "demo_design", "demo_design_path",
    # builders and link sizing
    "planar_chain", "yaw_pitch_pitch_arm", "tube_properties", "TubeProperties",
    "MATERIALS", "MATERIAL_SOURCES", "MODULI", "MODULUS_SOURCES", "tube_section_stiffness",
    # metrics
    "apparent_mass", "principal_masses", "mass_ratio", "mass_along", "isotropy_index",
    "near_singular", "manipulability", "torque_headroom", "acceleration_capability",
    "acceleration_along", "evaluate_metrics",
    # stiffness, sag, vibration, payload and speed ratings (linear elastic estimates)
    "tool_compliance", "tool_stiffness", "principal_stiffnesses", "tool_deflection",
    "natural_frequencies", "payload_capacity", "max_tool_speed", "datasheet", "Datasheet",
    "NaturalFrequencies", "PrincipalStiffnesses",
    # task regions, inverse kinematics, maps, scores and sweeps
    "Rectangle", "Box", "PointSet", "Task", "region_from_dict", "task_from_dict",
    "solve_positions", "PositionSolution", "STATUS", "SOLVED",
    "metric_map", "METRIC_ATTRS", "design_scores", "scores_table", "SCORE_COLUMNS",
    "Sweep", "parameter_paths", "save_results", "load_results", "baseline_table", "scores_view",
    # design search (batched variants, optimisation under constraints, Pareto sets, sensitivity)
    "DesignSearch", "pareto_mask", "score_variants", "one_at_a_time", "global_sensitivity",
    # contact speeds beside people (transient-contact model, ISO/TS 15066:2016 Annex A)
    "load_body_regions", "BodyRegion", "BodyArea", "BodyRegions", "reduced_mass",
    "transient_energy_limit", "transient_speed_limit", "pressure_speed_limit",
    "simplified_effective_mass", "contact_speed", "permissible_speed",
    "contact_speed_map", "check_speeds", "ContactSpeed", "SpeedCheck",
    # move cycles for actuator sizing (motion profiles, cycle torques)
    "trapezoidal_profile", "s_curve_profile", "MotionProfile", "Move", "Cycle", "MOVE_KINDS",
    "cycle_from_dict", "design_cycles", "cycle_torques", "CycleTorques",
    # result types and constants
    "PrincipalMasses", "TorqueHeadroom", "STANDARD_GRAVITY",
]

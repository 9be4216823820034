"""The public surface holds the contract names of arm-model.md (../shared/design/arm-model.md)."""

import importlib

import inertia_review as ir

CONTRACT_FUNCTIONS = ["load_design", "save_design", "apparent_mass", "isotropy_index",
                      "principal_masses", "mass_ratio", "mass_along", "near_singular"]
CONTRACT_ARM = ["from_dict", "to_dict", "dof", "tool_position", "jacobian", "mass_matrix",
                "gravity_torque", "velocity_torque", "task_axes"]


def test_contract_names_are_public():
    for name in CONTRACT_FUNCTIONS + ["Arm", "DesignError"]:
        assert name in ir.__all__, name
        assert callable(getattr(ir, name)), name
    for name in CONTRACT_ARM:
        assert hasattr(ir.Arm, name), name
    assert issubclass(ir.DesignError, ValueError)


def test_every_exported_name_exists_and_modules_are_private():
    for name in ir.__all__:
        assert hasattr(ir, name), name
    for sub in ("plots", "widgets"):
        module = importlib.import_module(f"inertia_review.{sub}")
        for name in module.__all__:
            assert hasattr(module, name), f"{sub}.{name}"


def test_principal_masses_is_a_named_tuple():
    arm = ir.planar_chain([1.0, 0.8], [2.0, 1.0])
    result = ir.principal_masses(arm, [0.3, 1.2])
    masses, directions = result
    assert result.masses is masses and result.directions is directions
    assert masses.shape == (2,) and directions.shape == (3, 2)

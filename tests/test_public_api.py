"""The public API is pinned: a change to netctl.__all__ must be deliberate."""

import netctl

EXPECTED = sorted([
    "ControllabilityReport", "InputDesign", "InvalidSystemError", "MissingFileError",
    "NetctlError", "NetworkFileError", "NetworkSummary", "OptionError", "StructuredSystem",
    "UnknownNameError", "__version__", "controllability", "is_structurally_controllable",
    "is_structurally_observable", "minimum_inputs", "minimum_sensors", "observability",
    "summarize",
    # disturbances, regulated outputs and control stations
    "Station", "make_stations",
    # disturbance decoupling, transfer-matrix rank, fixed modes of station arrangements
    "DecouplingReport", "FixedModesReport", "TransferRank", "decoupling", "fixed_modes",
    "transfer_rank",
    # ensemble (null models, cavity prediction, executor)
    "NullComparison", "cavity_driver_fraction", "compare_to_null", "configuration_model",
    "degree_preserving_swaps", "run_tasks",
    # roles, robustness, interconnection
    "LinkRoles", "NodeRoles", "contingency_sweep", "interconnection", "link_roles",
    "node_roles", "what_if",
    # a grid's N-1 over its elements (case IDs)
    "ElementSweep", "element_sweep",
    # placement under constraints, target control
    "Placement", "place_inputs", "place_sensors", "place_target_inputs",
    # strong structural controllability
    "StrongInputDesign", "StrongReport", "is_strongly_controllable",
    "minimum_strong_inputs", "strong_controllability",
    # numeric confirmation, exact controllability, modes and energy
    "EnergyReport", "ExactControllability", "ModalReport", "RankTest", "Verification",
    "energy", "exact_controllability", "modal_controllability", "realize", "verify",
    # optional extras (pandas, pyarrow, pypsa, wntr) missing
    "MissingExtraError",
])


def test_all_is_sorted_and_pinned():
    assert list(netctl.__all__) == sorted(netctl.__all__)
    assert sorted(netctl.__all__) == EXPECTED


def test_every_exported_name_exists():
    for name in netctl.__all__:
        assert hasattr(netctl, name), name

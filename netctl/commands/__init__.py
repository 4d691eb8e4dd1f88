"""The verbs of the ``netctl`` command, one module each, and their registry.

To add a verb: write ``netctl/commands/NAME.py`` with
``register(subparsers, common, name, help)`` (add the parser and its options; use the
shared options of :mod:`netctl.commands._options`; ``set_defaults(func=handler)``) and
add one line to :data:`VERBS`; the handler reads with :mod:`netctl.commands._load` and
prints with :mod:`netctl.commands._emit`. Keep the module's top level light (argparse,
``_options``, ``_load`` and ``_emit`` only): readers, analyses, matplotlib and Dask are
imported inside the handler, so that ``netctl --help`` and every other verb start fast.
Handlers raise :class:`netctl.errors.NetctlError` subclasses or
:class:`~netctl.commands._options.UsageError` for bad input (exit status 2) and return 0
when the property holds, 1 when it does not.

:mod:`netctl.cli` reads :data:`VERBS` to list the verbs (without importing their
modules) and imports only the module of the verb being run. Verb modules never import
:mod:`netctl.cli`.
"""

from __future__ import annotations

__all__ = ["VERBS"]

#: verb -> (module under ``netctl.commands``, one-line help shown by ``netctl --help``)
VERBS: dict[str, tuple[str, str]] = {
    "inspect": ("inspect", "sizes, components, structural rank and minimum input counts"),
    "drivers": ("drivers", "minimum inputs and where to put them"),
    "decouple": ("decouple", "can feedback keep every disturbance off the regulated outputs "
                             "(by state feedback; with the disturbances measured)? why not, "
                             "and the smallest fix; exit 0 yes, 1 no"),
    "sensors": ("drivers", "minimum sensors and where to put them"),
    "check": ("check", "is a given input (sensor) design structurally controllable "
                       "(observable)? exit 0 yes, 1 no"),
    "batch": ("batch", "one analysis over many network files, one CSV row a file "
                       "(local processes or a Dask cluster)"),
    "compare": ("compare", "minimum inputs against a degree-preserving null model and the "
                           "analytic prediction (mean, spread, z-score)"),
    "curve": ("curve", "driver-node fraction against mean degree for Erdos-Renyi and "
                       "scale-free families: cavity prediction and simulation (table, JSON, "
                       "plot)"),
    "convert": ("convert", "rewrite a network or system file in another format (see "
                           "docs/FORMATS.md)"),
    "energy": ("energy", "control energy of an input design (Gramian from its Cholesky factor: "
                         "smallest eigenvalue, condition, trace, log det, average energy), "
                         "average controllability ranking, greedy log-det actuators among "
                         "structurally controllable sets; exit 1 when uncontrollable for "
                         "every weight (structural) or for these weights (numeric rank "
                         "test)"),
    "generate": ("generate", "write a seeded synthetic network (Erdos-Renyi, scale-free, "
                             "grid, small-world)"),
    "join": ("join", "compose subsystems with ties and check the composite: unreachable "
                     "states, dilations, smallest fix, by subsystem"),
    "map": ("map", "map the network: driver nodes, control paths, unreached states and "
                   "dilations (--out map.html|png|svg|pdf|geojson|graphml); exit 0 "
                   "controllable, 1 not"),
    "modes": ("modes", "how strongly the inputs reach each mode (weakest first) and the "
                       "minimum inputs for these weights (largest eigenvalue multiplicity); "
                       "exit 1 when a mode is not reached"),
    "node-control": ("node_control", "per-node control measures: control capacity (share "
                                     "of minimum driver sets holding the node), control "
                                     "centrality, driver fraction by in- and out-degree"),
    "place": ("place", "cheapest actuator (sensor) placement under eligible sites, costs "
                       "and a budget; exit 0 met, 1 not met"),
    "report": ("report", "one self-contained report (--out report.html|report.md|"
                         "report.json): summary, minimum inputs, why a design fails, map, "
                         "roles, robustness, numeric and strong checks, cautions; exit 0 "
                         "design holds, 1 not"),
    "roles": ("roles", "which states every minimum driver set needs (critical / "
                       "intermittent / redundant) and which links every maximum matching "
                       "needs (critical / ordinary / redundant)"),
    "secure": ("secure", "N-1 security of an actuator (sensor) design: single points of "
                         "failure, fewest failures that break it, lines whose loss breaks "
                         "it; --place: cheapest design surviving k failures or any one "
                         "line; exit 0 secure, 1 not"),
    "stations": ("stations", "structurally fixed modes of an arrangement of control stations "
                             "(decentralized control): which condition fails and the "
                             "smallest change; exit 0 none, 1 fixed modes"),
    "strong": ("strong", "strong structural controllability: does a design hold for every "
                         "nonzero weight (exit 0 yes, 1 no), or the fewest inputs that do"),
    "sweep": ("sweep", "lose every link / state in turn (or k at a time, sampled): minimum "
                       "inputs and whether a given design survives; attack curves"),
    "verify": ("verify", "confirm the structural verdict on sampled or given weights; exit "
                         "1 when a sample disagrees (e.g. symmetries under identical links) "
                         "or the design is uncontrollable for every weight (structural) or "
                         "for these weights"),
    "whatif": ("whatif", "compare before and after adding links, removing links or removing "
                         "states: controllability of a design, minimum inputs, drivers, "
                         "roles"),
}

"""Section builders: each takes the shared :class:`ReportContext` and returns a
:class:`~netctl.report.document.Section` (or ``None`` to leave itself out).

The list :data:`SECTIONS` is the default report, in order. Builders for analyses that
live in optional modules import them inside; when such a module is missing the builder
raises ImportError and :func:`~netctl.report.build_report` leaves the section out (and
says so in the cautions), so the report works with any subset of netctl installed.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.report.document import Block, Section, figure, items, note, para, table
from netctl.report.failures import disturbances_section, failures_section
from netctl.system import StructuredSystem

__all__ = ["SECTIONS", "ReportContext", "SectionBuilder", "cautions_section",
           "design_section", "disturbances_section", "failures_section", "map_section", "minimum_inputs_section", "modes_section",
           "null_model_section",
           "numeric_section",
           "robustness_section", "roles_section", "strong_section", "summary_section"]

#: Up to this many states the report draws the map (as inline SVG in HTML up to
#: :data:`netctl.viz.small_map.SMALL_MAP_STATES` states and
#: :data:`~netctl.viz.small_map.SMALL_MAP_LINKS` links, as PNG above).
MAP_LIMIT = 200_000
#: Up to this many states the report runs the attack curves (one matching per step).
ATTACK_LIMIT = 50_000
#: Up to this many states the report confirms the verdict numerically.
NUMERIC_LIMIT = 20_000
#: Up to this many states the numeric confirmation uses dense rank tests (the
#: controllable dimension); above, the sparse certificate (full rank or not).
NUMERIC_DENSE_LIMIT = 400
#: Up to this many states the report compares with a null model, with this many samples
#: (fewer above ``NULL_FEWER_ABOVE`` states, so that a report on a large grid stays
#: quick; the section says how many and how to ask for more).
NULL_LIMIT = 20_000
NULL_SAMPLES = 40
NULL_FEWER_ABOVE = 5_000
NULL_SAMPLES_LARGE = 10
#: The same by links: a dense block of a few thousand states can carry 10^6 links, and
#: each sample rewires and matches all of them (40 samples of 10^6 links: about 13 s).
NULL_LINKS_LIMIT = 2_000_000
NULL_FEWER_LINKS_ABOVE = 100_000
#: Names listed per list (the JSON report lists all).
LIST_LIMIT = 200
#: What ``figures`` may be: every kind (PNG, and inline SVG where netctl draws one),
#: none, PNG only, or inline SVG where netctl draws one and PNG elsewhere.
FIGURES: tuple[bool | str, ...] = (True, False, "png", "svg")


@dataclass
class ReportContext:
    """What every section builder sees: the system, the design and shared results.

    ``inputs``: ``None`` (the file's inputs, else a minimum design) or state indices
    with a dedicated input each. Results used by several sections are computed once
    (``cached``).
    """

    system: StructuredSystem
    inputs: np.ndarray | None = None
    source: str = ""
    seed: int = 0
    dpi: float = 110.0
    weights: str | None = None
    figures: bool | str = True  # see FIGURES; False: none (a JSON report leaves them out)
    missing: list[str] = field(default_factory=list)
    _cache: dict[str, Any] = field(default_factory=dict)

    def cached(self, key: str, make: Callable[[], Any]) -> Any:
        if key not in self._cache:
            self._cache[key] = make()
        return self._cache[key]

    @property
    def svg(self) -> bool:
        """Draw the inline SVG figures (where a section has one)."""
        return self.figures is True or self.figures == "svg"

    def png(self, svg_drawn: bool = False) -> bool:
        """Draw a PNG figure: asked for, or the SVG that was wanted could not be drawn."""
        return (self.figures is True or self.figures == "png"
                or (self.figures == "svg" and not svg_drawn))

    @property
    def design_kind(self) -> str:
        """``"chosen"`` (``inputs`` given), ``"given"`` (the file's) or ``"minimum"``."""
        if self.inputs is not None:
            return "chosen"
        return "given" if self.system.n_inputs else "minimum"

    def design(self) -> Any:
        from netctl.structural import minimum_inputs

        return self.cached("design", lambda: minimum_inputs(self.system))

    def actuated(self) -> StructuredSystem:
        """The system with the design checked by the report installed."""
        def make() -> StructuredSystem:
            if self.inputs is not None:
                return self.system.with_inputs(self.system.names_of(self.inputs))
            if self.system.n_inputs:
                return self.system
            return self.design().apply(self.system)
        return self.cached("actuated", make)

    def design_words(self) -> str:
        return {"chosen": "the inputs chosen for this report",
                "given": "the inputs in the file",
                "minimum": "the minimum input design below (one of possibly many)"
                }[self.design_kind]


SectionBuilder = Callable[[ReportContext], "Section | None"]


def _names(ctx: ReportContext, idx: Any) -> list[str]:
    return ctx.system.names_of(np.asarray(idx, np.int64))


# ---------------------------------------------------------------------- core sections
def summary_section(ctx: ReportContext) -> Section:
    """Sizes, components, structural rank, minimum counts (``summarize``)."""
    from netctl.structural import summarize

    s = ctx.cached("summary", lambda: summarize(ctx.system))
    loops = ("every state has self-dynamics (a self-loop)" if s.n_self_loops == s.n_states
             and s.n_states else f"{s.n_self_loops} state(s) have self-dynamics (self-loops)"
             if s.n_self_loops else "no state has self-dynamics (no self-loops)")
    rows = [
        ("states", s.n_states), ("links (self-loops included)", s.n_links),
        ("self-loops", s.n_self_loops), ("isolated states", s.n_isolated),
        ("weakly connected components", s.n_weak_components),
        ("strongly connected components", s.n_strong_components),
        ("source components (fed by no other)", s.n_source_components),
        ("sink components (feed no other)", s.n_sink_components),
        ("structural rank of A", f"{s.structural_rank} of {s.n_states}"),
        ("minimum inputs (shared / dedicated)", f"{s.n_inputs} / {s.n_dedicated_inputs}"),
        ("minimum sensors (shared / dedicated)", f"{s.n_sensors} / {s.n_dedicated_sensors}"),
        ("inputs / outputs in the file", f"{s.n_inputs_given} / {s.n_outputs_given}"),
        ("weights", "given (used only by numeric checks)" if s.weighted else "pattern only"),
    ]
    blocks = [para(f"Model: {s.model}; {loops}. Whether states have self-dynamics changes "
                   "the answers drastically; it is a modelling choice, stated here."),
              table(("quantity", "value"), rows)]
    if ctx.system.elements is not None:  # a grid: its buses, branches and parameters
        from netctl.report.grid import grid_facts_block

        blocks.insert(1, grid_facts_block(ctx.system))
    return Section("summary", "Summary", tuple(blocks), data=s.to_dict())


def minimum_inputs_section(ctx: ReportContext) -> Section:
    """How many inputs at least, and where (``minimum_inputs``)."""
    from netctl.structural import minimum_inputs

    d = ctx.design()
    ded = ctx.cached("dedicated", lambda: minimum_inputs(ctx.system, dedicated=True))
    blocks = [para(f"At least {d.n_inputs} input(s) are needed when an input may act on "
                   f"several states, and {ded.n_inputs} when each input acts on one state. "
                   f"One minimum set of {d.drivers.size} driver node(s) (states an input "
                   "acts on directly):"),
              items(d.driver_names, limit=LIST_LIMIT)]
    shared = [w for w in d.wiring if w.size > 1]
    if shared:
        blocks.append(para("Shared input(s) acting on several states: " + "; ".join(
            f"input {k} on {', '.join(_names(ctx, w[:12]))}"
            + (f" and {w.size - 12} more" if w.size > 12 else "")
            for k, w in enumerate(d.wiring) if w.size > 1) + "."))
    blocks.append(note("Minimum sets are not unique: other sets of the same size work "
                       "equally well structurally (the roles section, when present, says "
                       "which states are in every, some or no minimum set). Ties are "
                       "broken by state order (Liu, Slotine & Barabási 2011; Commault & "
                       "Dion 2013)."))
    return Section("minimum-inputs", "Minimum inputs and where", tuple(blocks),
                   data={"shared": d.to_dict(), "dedicated": ded.to_dict()},
                   verdict=f"{d.n_inputs} input(s) (shared), {ded.n_inputs} (dedicated)")


def design_section(ctx: ReportContext) -> Section | None:
    """Is the given design structurally controllable, and if not, why (Lin's test)."""
    from netctl.structural import controllability

    if ctx.design_kind == "minimum":
        return None
    system = ctx.actuated()
    r = ctx.cached("controllability", lambda: controllability(system))
    drivers = system.driven_states()
    blocks = [para(f"Design checked: {ctx.design_words()}: {system.n_inputs} input(s) on "
                   f"{drivers.size} state(s):"), items(_names(ctx, drivers), limit=LIST_LIMIT)]
    if r.controllable:
        verdict = "structurally controllable"
        blocks.append(para("Every state is reached from an input and the generic rank of "
                           "[A B] is full (Lin 1974), so almost all weights of this "
                           "pattern give a controllable system."))
    else:
        verdict = (f"NOT structurally controllable: generic controllable dimension "
                   f"{r.controllable_dimension} of {r.n_states}")
        blocks.append(para("Why it fails:"))
        blocks.append(items(r.reasons(), limit=LIST_LIMIT))
        blocks.append(para(f"Smallest fix: add {r.n_missing_inputs} dedicated input(s) at:"))
        blocks.append(items(r.names(r.fix), limit=LIST_LIMIT))
    return Section("design", "Why the given design holds or fails", tuple(blocks),
                   data=r.to_dict(), status="ok" if r.controllable else "fail",
                   verdict=verdict, badge="holds" if r.controllable else "fails")


def map_section(ctx: ReportContext) -> Section | None:
    """The map: drivers, control paths, trouble spots."""
    n = ctx.system.n_states
    if n == 0:
        return None
    if n > MAP_LIMIT:
        return Section("map", "Map", (note(f"The network has {n} states, more than the "
                                           f"report draws ({MAP_LIMIT}); draw it with "
                                           "netctl map."),))
    from netctl.viz import map_marks
    from netctl.viz.interactive import map_fragment, map_payload
    from netctl.viz.network import _default_title
    from netctl.viz.placement import map_placement
    from netctl.viz.small_map import SMALL_MAP_LINKS, SMALL_MAP_STATES

    inputs: Any = None
    if ctx.inputs is not None:
        inputs = _names(ctx, ctx.inputs)
    marks = map_marks(ctx.system, inputs=inputs)
    placement = map_placement(ctx.system, seed=ctx.seed)
    how = placement.how
    title = _default_title(ctx.system, marks, how)
    svg = ""
    # our own SVG (no plotting library loaded) where it shows everything the PNG does:
    # up to SMALL_MAP_STATES states and SMALL_MAP_LINKS links (above, it leaves links out)
    if ctx.svg and n <= SMALL_MAP_STATES and ctx.system.n_links <= SMALL_MAP_LINKS:
        from netctl.viz.small_map import marks_map_svg
        from netctl.viz.small_marks import map_view

        rows, lines = map_view(marks)
        svg = marks_map_svg(ctx.system, rows, lines, placement.xy, how=how,
                            title=_default_title(ctx.system, marks, how, width=72))
    png = b""
    if ctx.png(svg_drawn=bool(svg)):
        from netctl.viz.network import map_figure
        from netctl.viz.output import figure_bytes

        png = figure_bytes(map_figure(ctx.system, marks, positions=placement.xy,
                                      title=title), "png", dpi=ctx.dpi)
    caption = (f"Map of {ctx.design_words()}; {placement.note()}. Triangles: driver nodes; "
               "heavy solid lines: control paths; heavy dashed lines: control cycles; "
               "hatched squares: states no input reaches; hollow diamonds: a dilation; "
               "dashed hollow triangles: where to add inputs; violet octagon rings: "
               "single points of failure; dotted circles: where a disturbance acts. The "
               "map's legend explains every mark.")
    fragment = map_fragment(map_payload(ctx.system, marks, placement, title=title),
                            element_id="netctl-report-map")
    intro = para("Drag to pan, use the wheel to zoom, find a state by name, click a state "
                 "for its role, the input that reaches it and its control path, and switch "
                 "layers on and off in the legend.")
    return Section("map", "Map", (intro, Block("map", text=caption, png=png, svg=svg,
                                               html=fragment)),
                   data={"layout": how, "design": marks.design,
                         "drivers": marks.names(marks.drivers),
                         "n_control_links": int(marks.matched_sources.size),
                         "n_cycle_links": int(np.count_nonzero(marks.on_cycle))})


def cautions_section(ctx: ReportContext) -> Section:
    """The usual cautions, the model used, and what this report could not include."""
    from netctl._meta import CAUTION

    blocks = [note(CAUTION),
              para(f"Model used: {ctx.system.model}. Structural results hold for almost all "
                   "values of the nonzero entries, not for every value: constrained "
                   "parameters (identical links, symmetric couplings) can make a "
                   "structurally controllable pattern uncontrollable; the numeric "
                   "confirmation, when present, checks sampled weights."),
              para("Minimum input sets and control paths are one choice among possibly "
                   "many; other choices of the same size are equally valid structurally.")]
    if ctx.system.elements is not None:
        from netctl.report.grid import grid_caution_block

        blocks.insert(1, grid_caution_block())
    if ctx.missing:
        blocks.append(para("Not included (the analysis is not available in this "
                           "installation, or was skipped): " + "; ".join(ctx.missing) + "."))
    return Section("cautions", "Cautions", tuple(blocks),
                   data={"caution": CAUTION, "model": ctx.system.model,
                         "not_included": list(ctx.missing)})


# ---------------------------------------------------------------------- optional sections
def roles_section(ctx: ReportContext) -> Section | None:
    """Node roles (Jia et al. 2013) and link roles (Liu et al. 2011)."""
    from netctl.structural.roles import link_roles, node_roles

    nr = ctx.cached("node_roles", lambda: node_roles(ctx.system))
    lr = ctx.cached("link_roles", lambda: link_roles(ctx.system))
    nc, lc = nr.counts(), lr.counts()
    svg = ""
    if ctx.svg:  # two bars whatever the size: always our own SVG when it is wanted
        from netctl.viz.role_bars import role_bars_svg

        svg = role_bars_svg({
            "states": (("critical", "intermittent", "redundant"),
                       (nc["critical"], nc["intermittent"], nc["redundant"])),
            "links": (("critical", "ordinary", "redundant"),
                      (lc["critical"], lc["ordinary"], lc["redundant"]))})
    png = _roles_png(ctx, nc, lc) if ctx.png(svg_drawn=bool(svg)) else b""
    crit_links = [f"{u} -> {v}" for u, v in lr.link_names(lr.critical[:LIST_LIMIT])]
    blocks = [
        para("A state is critical if it is a driver node in every minimum driver set, "
             "intermittent if in some, redundant if in none (Jia et al. 2013). A link is "
             "critical if it is in every maximum matching: losing it raises the number of "
             "inputs needed; redundant links are in none (Liu, Slotine & Barabási 2011)."),
        table(("", "critical", "intermittent / ordinary", "redundant"),
              [("states", nc["critical"], nc["intermittent"], nc["redundant"]),
               ("links", lc["critical"], lc["ordinary"], lc["redundant"])]),
        figure(png, "Shares of state and link roles (dark: critical; dotted: intermittent "
                    "or ordinary; white: redundant).", svg=svg),
        para(f"Critical states ({nc['critical']}): every minimum design drives them."),
        items(nr.names(nr.critical[:LIST_LIMIT]), total=nc["critical"]),
        para(f"Critical links ({lc['critical']}): losing one raises the minimum number of "
             "inputs."),
        items(crit_links, total=lc["critical"]),
    ]
    data_grid: dict[str, Any] = {}
    if ctx.system.elements is not None:  # a grid: branches by ID, not links inside buses
        from netctl.report.grid import grid_roles_blocks

        more, data_grid = grid_roles_blocks(ctx)
        blocks = blocks[:-2] + more
    return Section("roles", "Roles of states and links", tuple(blocks),
                   data={**({"branches": data_grid} if data_grid else {}),
                         "node_counts": nc, "link_counts": lc,
                         "critical_states": nr.names(nr.critical),
                         "critical_links": [{"source": u, "target": v}
                                            for u, v in lr.link_names(lr.critical)]})


def _roles_png(ctx: ReportContext, nc: dict[str, int], lc: dict[str, int]) -> bytes:
    """The shares of state and link roles as two bars (PNG)."""
    from netctl.viz.charts import plot_role_composition
    from netctl.viz.output import figure_bytes, new_figure

    fig = new_figure((6.4, 3.2))  # no pyplot: matplotlib's object API (issue 15)
    axes = fig.subplots(2, 1)
    plot_role_composition({"states": [nc["critical"], nc["intermittent"],
                                      nc["redundant"]]}, ax=axes[0], title="")
    plot_role_composition({"links": [lc["critical"], lc["ordinary"], lc["redundant"]]},
                          ax=axes[1], roles=("critical", "ordinary", "redundant"),
                          title="")
    return figure_bytes(fig, "png", dpi=ctx.dpi)


def null_model_section(ctx: ReportContext) -> Section | None:
    """Minimum inputs against a degree-preserving null model (``netctl.ensemble``)."""
    from netctl.ensemble import compare_to_null

    n = ctx.system.n_states
    if n < 10 or ctx.system.n_links == 0:
        return None
    links = ctx.system.n_links
    if n > NULL_LIMIT or links > NULL_LINKS_LIMIT:
        over = (f"{NULL_LIMIT} states" if n > NULL_LIMIT else f"{NULL_LINKS_LIMIT} links")
        ctx.missing.append(f"null-model comparison (over {over}; run netctl compare)")
        return None
    few = n > NULL_FEWER_ABOVE or links > NULL_FEWER_LINKS_ABOVE
    samples = NULL_SAMPLES_LARGE if few else NULL_SAMPLES
    above = (f"{NULL_FEWER_ABOVE} states" if n > NULL_FEWER_ABOVE
             else f"{NULL_FEWER_LINKS_ABOVE} links")
    r = ctx.cached("null", lambda: compare_to_null(ctx.system, null="degree",
                                                   samples=samples, seed=ctx.seed,
                                                   executor="local", workers=1))
    png = b""
    if ctx.figures:
        from netctl.viz.charts import CHART_SIZE, plot_null_model
        from netctl.viz.output import figure_bytes, new_figure

        fig = new_figure(CHART_SIZE)
        plot_null_model(r.observed_n_inputs, r.samples, label="this network",
                        quantity="minimum number of inputs",
                        prediction=None if r.prediction is None
                        else r.prediction.driver_fraction * n, ax=fig.add_subplot())
        png = figure_bytes(fig, "png", dpi=ctx.dpi)
    z = r.z_score
    words = ("the same as" if z is None or abs(z) < 2 else
             "more than" if z > 0 else "fewer than")
    pred = ("" if r.prediction is None else
            f" The cavity prediction for these degree distributions is "
            f"{r.prediction.driver_fraction * n:.1f} input(s) (Liu, Slotine & Barabási "
            "2011).")
    return Section(
        "null-model", "Against a degree-preserving null model",
        (para(f"The network needs {r.observed_n_inputs} input(s); {r.n_samples} random "
              f"networks with the same in- and out-degrees (configuration model, seed "
              f"{r.seed}) need {r.mean:.1f} ± {r.std:.1f}: {words} expected from the "
              f"degrees alone (|z| < 2 counts as the same; common practice, no source)."
              + pred + ("" if samples == NULL_SAMPLES else
                        f" Only {samples} samples above {above}, to keep "
                        "the report quick; netctl compare --samples N draws more.")),
         figure(png, "Minimum inputs of the randomized networks (hatched) and of this "
                     "network (vertical line).")),
        data=r.to_dict())


def robustness_section(ctx: ReportContext) -> Section | None:
    """Single link losses against the design; attack curves."""
    from netctl.structural.robustness import attack_curve, contingency_sweep

    if ctx.system.elements is not None:  # a grid: element outages by case ID
        from netctl.report.grid import grid_robustness_section

        return grid_robustness_section(ctx)
    system = ctx.actuated()
    sweep = ctx.cached("sweep", lambda: contingency_sweep(system, elements="links"))
    breaking = sweep.breaking
    blocks = [para(f"Losing any one of the {sweep.n_elements} links in turn: "
                   f"{breaking.size} loss(es) break {ctx.design_words()}, and "
                   f"{sweep.costly.size} raise the minimum number of inputs "
                   f"(now {sweep.n_inputs}).")]
    if breaking.size:
        rows = [(sweep.label(k), "; ".join(sweep.reasons(k)) or "-")
                for k in breaking[:LIST_LIMIT].tolist()]
        blocks.append(table(("link lost", "why the design fails then"), rows,
                            total=int(breaking.size)))
    if sweep.has_design and not sweep.controllable_before:
        status, badge = "info", "not assessed"
        verdict = ("the design already fails (see above), so single losses were not "
                   "assessed against it")
        blocks[0] = para(f"Losing any one of the {sweep.n_elements} links in turn: "
                         f"{sweep.costly.size} loss(es) raise the minimum number of inputs "
                         f"(now {sweep.n_inputs}).")
    elif breaking.size:
        status, badge = "warning", f"{breaking.size} fragile"
        verdict = f"{breaking.size} single link loss(es) break the design"
    else:
        status, badge = "ok", "robust"
        verdict = "no single link loss breaks the design"
    data: dict[str, Any] = {"links": sweep.to_dict(rows=False)}
    n = ctx.system.n_states
    if 20 <= n <= ATTACK_LIMIT:  # fewer states give too few points to read a trend
        curves = {}
        for strategy, label in (("random", "random order"),
                                ("degree", "highest degree first")):
            c = attack_curve(ctx.system, elements="nodes", strategy=strategy, steps=20,
                             max_fraction=0.5, seed=ctx.seed)
            curves[label] = (c.fraction_removed, c.driver_fraction)
            data[f"attack_{strategy}"] = c.to_dict()
        png = b""
        if ctx.figures:
            from netctl.viz.charts import CHART_SIZE, plot_attack_curves
            from netctl.viz.output import figure_bytes, new_figure

            fig = new_figure(CHART_SIZE)
            plot_attack_curves(curves, xlabel="fraction of states removed",
                               ylabel="minimum inputs / states left", ax=fig.add_subplot())
            png = figure_bytes(fig, "png", dpi=ctx.dpi)
        blocks.append(figure(png, "Attack curves: the share of the remaining states that "
                                  "need an input as states are removed, in random order "
                                  f"(seed {ctx.seed}) and highest total degree first."))
    elif n > ATTACK_LIMIT:
        ctx.missing.append(f"attack curves (over {ATTACK_LIMIT} states)")
    return Section("robustness", "Robustness to losses", tuple(blocks), data=data,
                   status=status, verdict=verdict, badge=badge)


def numeric_section(ctx: ReportContext) -> Section | None:
    """Confirm the structural verdict on sampled weights (``netctl.numeric.verify``)."""
    from netctl.numeric import verify

    n = ctx.system.n_states
    if n > NUMERIC_LIMIT or n == 0:
        ctx.missing.append(f"numeric confirmation (over {NUMERIC_LIMIT} states; run "
                           "netctl verify)")
        return None
    from netctl.numeric.realize import PARAMETERIZATIONS

    system = ctx.actuated()
    # the model's own numbers: swing weights for a second-order model, unless asked
    weights = ctx.weights or ("swing" if system.model.startswith("second-order")
                              else "independent")
    method = "auto" if n <= NUMERIC_DENSE_LIMIT else "certificate"
    v = ctx.cached("verify", lambda: verify(system, weights=weights, samples=2,
                                            seed=ctx.seed, method=method))
    unconfirmed = any(f.startswith(("NOT CONFIRMED", "rank certified")) for f in v.findings)
    blocks = [para(f"Weights '{weights}' ({PARAMETERIZATIONS[weights]}), {len(v.samples)} "
                   f"sample(s), seeds {list(v.seeds)}, method {v.method}."),
              items(list(v.findings)), para(v.verdict.line())]
    if not v.agrees:
        badge, verdict = "disagrees", "a numeric sample DISAGREES with the structural verdict"
    elif unconfirmed:
        badge, verdict = "not confirmed", ("the numeric check does not contradict the "
                                           "structural verdict but cannot confirm it")
    else:
        badge, verdict = "agrees", "the numeric rank agrees with the structural verdict"
    return Section("numeric", "Numeric confirmation", tuple(blocks), data=v.to_dict(),
                   status="ok" if v.agrees and not unconfirmed else "warning",
                   badge=badge, verdict=verdict)


def modes_section(ctx: ReportContext) -> Section | None:
    """The weakest modes for the file's own weights (``netctl.numeric.modal``)."""
    system = ctx.actuated()
    n = system.n_states
    if not system.weighted or n == 0:
        return None  # pattern only: modes need numbers (see the numeric confirmation)
    if n > NUMERIC_DENSE_LIMIT:
        ctx.missing.append(f"weakest modes (over {NUMERIC_DENSE_LIMIT} states; run "
                           "netctl modes)")
        return None
    # imported once the section has something to compute: its scipy.linalg costs more
    # than the rest of a small report (issue 15); still before the work, so a missing
    # module leaves the section out as before
    from netctl.numeric.modal import modal_controllability

    r = ctx.cached("modes", lambda: modal_controllability(system))
    lam = np.array([m.eigenvalue for m in r.modes], dtype=np.complex128)
    reach = np.array([m.reach for m in r.modes], dtype=np.float64)
    png = b""
    if ctx.figures:
        from netctl.viz.charts import plot_weakest_modes, weakest_modes_size
        from netctl.viz.output import figure_bytes, new_figure

        k = min(10, lam.size)
        fig = new_figure(weakest_modes_size(k, lam.size))
        plot_weakest_modes(lam, reach, k=k, ax=fig.add_subplot(),
                           quantity="reach of the inputs (cosine to the input subspace)")
        png = figure_bytes(fig, "png", dpi=ctx.dpi)
    rows = [(f"{complex(m.eigenvalue):.4g}", m.multiplicity, f"{m.reach:.3g}",
             ", ".join(r.names(m.carriers[:8])) + (" ..." if m.carriers.size > 8 else ""))
            for m in r.weakest(10)]
    unreached = len(r.unreached)
    return Section(
        "modes", "Weakest modes (the file's weights)",
        (para("How strongly the inputs reach each mode of A with the weights in the file: "
              "the cosine between the mode's left eigenvector and the input subspace "
              "(0: the mode cannot be moved). Small values mean large input energy."),
         figure(png, "The weakest modes, smallest reach first (log scale)."),
         table(("eigenvalue", "multiplicity", "reach", "states it lives on"), rows)),
        data=r.to_dict(), status="warning" if unreached else "info",
        badge=f"{unreached} unreached" if unreached else "",
        verdict=(f"{unreached} mode(s) are not reached by the inputs" if unreached else ""))


def strong_section(ctx: ReportContext) -> Section | None:
    """Strong structural controllability: for every nonzero weight (zero forcing)."""
    from netctl.structural.strong import strong_controllability

    system = ctx.actuated()
    r = ctx.cached("strong", lambda: strong_controllability(system))
    blocks = [para("Strong structural controllability asks for controllability for "
                   "every nonzero value of every entry, not only almost all (zero forcing; "
                   "Mayeda & Yamada 1979; Monshizadeh, Zhang & Camlibel 2014). Diagonal "
                   f"convention: {r.diagonal}.")]
    if not r.strongly_controllable:
        blocks.append(items(r.reasons()))
    return Section("strong", "Strong structural controllability", tuple(blocks),
                   data=r.to_dict(), status="ok" if r.strongly_controllable else "warning",
                   badge="holds" if r.strongly_controllable else "does not hold",
                   verdict=("strongly structurally controllable" if r.strongly_controllable
                            else "not strongly structurally controllable: some nonzero "
                                 "weights make the design uncontrollable"))


#: The default report, in order. Replace or extend this list (or pass ``sections=``
#: to :func:`netctl.report.build_report`) to change what a report holds.
SECTIONS: list[SectionBuilder] = [
    summary_section,
    minimum_inputs_section,
    design_section,
    map_section,
    disturbances_section,
    roles_section,
    robustness_section,
    failures_section,
    null_model_section,
    numeric_section,
    modes_section,
    strong_section,
    cautions_section,
]

#: Sections that need modules some installations lack (see :data:`SECTIONS`).
OPTIONAL: dict[SectionBuilder, str] = {
    roles_section: "roles of states and links",
    robustness_section: "robustness to losses",
    failures_section: "single points of failure",
    null_model_section: "null-model comparison",
    numeric_section: "numeric confirmation",
    modes_section: "weakest modes",
    strong_section: "strong structural controllability",
}


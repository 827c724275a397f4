"""SVG pictures of results: profiles, the effectiveness curve, the size trade-off, sweeps.

Each function takes plain data (the JSON-ready dicts and lists the service already answers,
so a picture shows exactly what the JSON says) and returns the SVG document as bytes.

matplotlib costs about 0.6 s to import: it is imported on the first picture only, never at
start-up. Every picture is its own ``matplotlib.figure.Figure`` rendered into an
``io.BytesIO`` (no pyplot, so no global figure state is shared between requests). The
process-wide settings made on first use are constants: the Agg backend, text kept as SVG
``<text>`` (readable, searchable, accessible) and a fixed id salt so the same data gives
the same bytes.

Elements a caller (or a test) may want to find carry an SVG id (matplotlib ``gid``):
``concentration-profile``, ``temperature-profile``, ``steady-state-<i>``,
``effectiveness-curve``, ``asymptote-kinetic``, ``asymptote-diffusion``,
``operating-point``, ``other-steady-states``, ``unstable-steady-states``,
``effectiveness-vs-size``, ``pressure-gradient``, ``target-effectiveness``,
``largest-pellet``, ``sweep-effectiveness``, ``sweep-generalized-modulus``.
"""

from __future__ import annotations

import io
import os
import stat
import tempfile
import threading

import numpy as np

SVG_MEDIA_TYPE = "image/svg+xml"

# A restrained palette of our own: ink, rust, sage, and greys for references.
INK = "#24476b"
RUST = "#b4532a"
SAGE = "#4f7d5c"
GREY = "#7a7a7a"
LIGHT = "#d9d9d9"

FIGURE_SIZE = (6.6, 4.2)  # [in]

SHAPE_NAMES = {
    "sphere": "Sphere", "cylinder": "Cylinder", "slab": "Slab",
    "hollow_cylinder": "Ring (hollow cylinder)", "extrudate": "Lobed extrudate",
    "custom": "Custom shape",
}
MODEL_NAMES = {
    "power_law": "power law", "langmuir_hinshelwood": "Langmuir-Hinshelwood",
    "reversible_first_order": "reversible first order",
}

_configured = False
_lock = threading.Lock()


def _configure() -> None:
    """Import matplotlib and fix its process-wide settings (once)."""
    global _configured
    if _configured:
        return
    with _lock:
        if _configured:
            return
        _cache_directory()
        import matplotlib

        matplotlib.use("Agg")
        matplotlib.rcParams.update({
            "svg.fonttype": "none",
            "svg.hashsalt": "pellet-effectiveness",
            "font.size": 9.5,
            "axes.spines.top": False,
            "axes.edgecolor": "#444444",
            "axes.linewidth": 0.8,
            "legend.frameon": False,
            "legend.fontsize": 8.5,
        })
        _configured = True


def _cache_directory() -> None:
    """Where matplotlib keeps its font cache, when the user has no writable home.

    The container's service user has none (HOME=/nonexistent): matplotlib would then make a
    new temporary directory in every worker, log a warning and rebuild its font cache there
    at each first picture. One directory per user under the system temporary directory is
    shared by the workers and kept across their restarts. MPLCONFIGDIR, when set, wins.
    """
    if os.environ.get("MPLCONFIGDIR"):
        return
    home = os.path.expanduser("~")
    if os.access(home, os.W_OK):
        return
    path = os.path.join(tempfile.gettempdir(), f"pellet-matplotlib-{os.getuid()}")
    try:
        os.makedirs(path, mode=0o700, exist_ok=True)
    except OSError:
        return  # matplotlib falls back to a temporary directory of its own
    info = os.lstat(path)
    if stat.S_ISDIR(info.st_mode) and info.st_uid == os.getuid():  # not another user's
        os.environ["MPLCONFIGDIR"] = path


def _figure():
    _configure()
    from matplotlib.figure import Figure

    return Figure(figsize=FIGURE_SIZE)


def _plain_number(x, pos=None) -> str:
    return f"{x:g}"


def _log_axis(axis) -> None:
    """A log axis labelled in plain numbers ("0.01", "100", "1e+06"): the default labels are
    mathtext, whose parser costs more than the rest of the picture. Minor ticks are
    labelled (2 and 5) only when the axis spans less than a decade."""
    from matplotlib.ticker import FuncFormatter

    def minor(x, pos=None):
        low, high = sorted(axis.get_view_interval())
        if not (low > 0 and high / low < 10):
            return ""
        mantissa = x / 10.0 ** np.floor(np.log10(x) + 1e-9)
        return f"{x:g}" if round(mantissa) in (2, 5) or high / low < 3 else ""

    axis.set_major_formatter(FuncFormatter(_plain_number))
    axis.set_minor_formatter(FuncFormatter(minor))


def _finish(fig, axes: list, twin: bool = False) -> bytes:
    """Legend under the plot (two columns), margins fixed in inches, then the SVG bytes.

    Fixed margins rather than a layout engine, which costs several times the rest of the
    picture; the legend sits outside the axes so that it never hides a curve."""
    handles, labels = [], []
    for ax in axes:
        h, lab = ax.get_legend_handles_labels()
        handles += h
        labels += lab
    rows = (len(handles) + 1) // 2
    width, height = FIGURE_SIZE[0], FIGURE_SIZE[1] + 0.2 * rows
    fig.set_size_inches(width, height)
    bottom = 0.5 + (0.2 * rows + 0.1 if rows else 0.0)
    fig.subplots_adjust(left=0.8 / width, right=1.0 - (0.85 if twin else 0.3) / width,
                        bottom=bottom / height, top=1.0 - 0.35 / height)
    if handles:
        fig.legend(handles, labels, loc="lower center", ncol=2, bbox_to_anchor=(0.5, 0.0),
                   columnspacing=1.6, handlelength=2.2)
    axes[0].spines["right"].set_visible(twin)
    buffer = io.BytesIO()
    fig.savefig(buffer, format="svg", metadata={"Date": None})
    return buffer.getvalue()


def pretty_unit(unit: str) -> str:
    """'mol/(m^3*s)' -> 'mol/(m³·s)'; '' -> '-' (dimensionless)."""
    if not unit:
        return "-"
    for plain, nice in (("^-1", "⁻¹"), ("^2", "²"), ("^3", "³"), ("*", "·")):
        unit = unit.replace(plain, nice)
    return unit


def length_unit(largest: float) -> tuple[str, float]:
    """A readable length unit for values up to ``largest`` [m]: (name, factor from m)."""
    if largest >= 1.0:
        return "m", 1.0
    if largest >= 1e-4:
        return "mm", 1e3
    return "µm", 1e6


def _position_label(shape: str, exposed_faces) -> str:
    if shape == "slab":
        return ("Distance from the sealed face x" if exposed_faces == 1
                else "Distance from the mid-plane x")
    return "Radial position r"


def _state_text(state: dict) -> str:
    return (f"η = {state['effectiveness_factor']:.4g}, "
            f"{'stable' if state['stable'] else 'unstable'}")


def _twin(ax, color: str, label: str, log: bool = False):
    """A second y axis on the right, in its own colour."""
    other = ax.twinx()
    other.spines["top"].set_visible(False)
    if log:
        other.set_yscale("log")
        _log_axis(other.yaxis)
    other.set_ylabel(label, color=color)
    other.tick_params(axis="y", colors=color, which="both")
    return other


def _title(ax, text: str) -> None:
    ax.set_title(text, loc="left", fontsize=10)


def _note(ax, text: str) -> None:
    ax.text(0.01, 0.02, text, transform=ax.transAxes, color=RUST, fontsize=8)


def profile_svg(answer: dict) -> bytes:
    """Concentration (and temperature) from centre to surface, from an /v1/effectiveness answer.

    Every steady state is shown: the answer carries the full profile of the headline state
    only, so that one is a line and each other state is a marker at its centre values
    (concentration, and temperature when known) at the centre position.
    """
    fig = _figure()
    ax = fig.add_subplot()
    pellet = answer["inputs"]["pellet"]
    shape = pellet["shape"]
    states = answer.get("steady_states") or []
    head = answer.get("headline_state")
    profile = answer.get("profile")
    eta = answer["effectiveness_factor"]
    model = answer["inputs"]["kinetics"]["model"]
    _title(ax, f"{SHAPE_NAMES.get(shape, shape)}, {MODEL_NAMES.get(model, model)}: "
               f"η = {eta:.4g} ({answer['regime']} regime)")
    ax.set_ylabel("Concentration c [mol/m³]")
    if not profile:
        unit, _ = length_unit(answer["thiele_length"]["value"])
        ax.set_xlabel(f"Position [{unit}]")
        ax.text(0.5, 0.5, f"No 1-D profile exists for this shape "
                f"({SHAPE_NAMES.get(shape, shape).lower()}):\nits η = {eta:.4g} comes from "
                f"a 2-D or a generalized-modulus solution",
                transform=ax.transAxes, ha="center", va="center", color=GREY)
        ax.set_xticks([])
        ax.set_yticks([])
        return _finish(fig, [ax])
    x = np.asarray(profile["position"]["value"], dtype=float)
    c = np.asarray(profile["concentration"]["value"], dtype=float)
    unit, factor = length_unit(float(np.max(np.abs(x))) or answer["thiele_length"]["value"])
    label = "concentration c"
    if len(states) > 1 and head is not None:
        label += f", state {head + 1} of {len(states)} ({_state_text(states[head])})"
    (line,) = ax.plot(x * factor, c, color=INK, lw=2, label=label)
    line.set_gid("concentration-profile")
    ax.set_xlabel(f"{_position_label(shape, pellet.get('exposed_faces'))} [{unit}]")
    ax.set_xlim(float(x[0] * factor), float(x[-1] * factor))
    temperature = profile.get("temperature")
    ax2 = None
    if temperature:
        ax2 = _twin(ax, RUST, "Temperature T [K]")
        (tline,) = ax2.plot(x * factor, temperature["value"], color=RUST, lw=1.6, ls="--",
                            label="temperature T")
        tline.set_gid("temperature-profile")
    top = float(np.max(c))
    for index, state in enumerate(states):
        if index == head:
            continue
        centre = state["center_concentration"]["value"]
        top = max(top, centre)
        (dot,) = ax.plot([x[0] * factor], [centre], ls="none", marker="o", ms=7, color=INK,
                         mfc=INK if state["stable"] else "white", clip_on=False,
                         label=f"centre c of state {index + 1} ({_state_text(state)})")
        dot.set_gid(f"steady-state-{index}")
        if ax2 is not None and "center_temperature" in state:
            ax2.plot([x[0] * factor], [state["center_temperature"]["value"]], ls="none",
                     marker="s", ms=6, color=RUST, mfc=RUST if state["stable"] else "white",
                     clip_on=False, label=f"centre T of state {index + 1}")
    ax.set_ylim(bottom=0.0, top=max(top, 1e-300) * 1.08)
    return _finish(fig, [ax] + ([ax2] if ax2 is not None else []), twin=ax2 is not None)


def effectiveness_curve_svg(curve: dict) -> bytes:
    """eta against the generalized modulus (log-log) with both asymptotes and the operating
    point, from an /v1/effectiveness/curve answer."""
    fig = _figure()
    ax = fig.add_subplot()
    ax.set_xscale("log")
    ax.set_yscale("log")
    _log_axis(ax.xaxis)
    _log_axis(ax.yaxis)
    points = [p for p in curve["points"] if p["effectiveness_factor"] > 0]
    phi = np.array([p["generalized_modulus"] for p in points])
    eta = np.array([p["effectiveness_factor"] for p in points])
    operating = curve["operating_point"]
    _title(ax, f"{SHAPE_NAMES.get(curve['shape'], curve['shape'])}, "
               f"{MODEL_NAMES.get(curve['model'], curve['model'])}: effectiveness factor")
    span = np.geomspace(min(phi.min(), operating["generalized_modulus"]) / 1.5,
                        max(phi.max(), operating["generalized_modulus"]) * 1.5, 100)
    (kinetic,) = ax.plot(span, np.ones_like(span), color=GREY, lw=1, ls=":",
                         label="kinetic asymptote η = 1")
    kinetic.set_gid("asymptote-kinetic")
    (diffusion,) = ax.plot(span, 1.0 / span, color=GREY, lw=1, ls="--",
                           label="diffusion asymptote η = 1/Φ")
    diffusion.set_gid("asymptote-diffusion")
    (line,) = ax.plot(phi, eta, color=INK, lw=2, label=(
        "η, headline state" if curve.get("several_states") else "η of this shape and rate law"))
    line.set_gid("effectiveness-curve")
    others = [(p["generalized_modulus"], s["effectiveness_factor"], s["stable"])
              for p in points + [operating] for s in p.get("other_steady_states", ())
              if s["effectiveness_factor"] > 0]
    if others:
        xs, ys, stable = (np.array(v) for v in zip(*others))
        if stable.any():
            ax.scatter(xs[stable], ys[stable], s=14, color=INK, label="other stable states",
                       gid="other-steady-states")
        if (~stable).any():
            ax.scatter(xs[~stable], ys[~stable], s=14, facecolors="white", edgecolors=INK,
                       label="unstable states", gid="unstable-steady-states")
    (dot,) = ax.plot([operating["generalized_modulus"]], [operating["effectiveness_factor"]],
                     ls="none", marker="o", ms=8, color=RUST, mec="white", mew=1.2,
                     label=f"this case: Φ = {operating['generalized_modulus']:.4g}, "
                           f"η = {operating['effectiveness_factor']:.4g}")
    dot.set_gid("operating-point")
    ax.set_xlim(span[0], span[-1])
    low = min(float(eta.min()), operating["effectiveness_factor"])
    high = max(float(eta.max()), operating["effectiveness_factor"], 1.0)
    ax.set_ylim(low / 1.6, high * 1.6)
    ax.set_xlabel("Generalized modulus Φ [-]")
    ax.set_ylabel("Effectiveness factor η [-]")
    if not curve.get("complete", True):
        _note(ax, curve.get("note", "part of the curve is missing"))
    ax.grid(True, which="major", color=LIGHT, lw=0.6)
    return _finish(fig, [ax])


def tradeoff_svg(dimension: str, sizes, etas, gradients, target: float,
                 largest: float | None, log_scale: bool, note: str | None = None,
                 si_unit: str = "m") -> bytes:
    """Effectiveness factor and Ergun pressure gradient against pellet size (the
    /v1/size trade-off table). sizes in ``si_unit`` (the main dimension's: m, or m^3 for a
    custom shape's volume); gradients [Pa/m] or None without a bed."""
    fig = _figure()
    ax = fig.add_subplot()
    sizes = np.asarray(sizes, dtype=float)
    if si_unit == "m":
        unit, factor = length_unit(float(sizes.max()))
    else:
        unit, factor = pretty_unit(si_unit), 1.0
    if log_scale:
        ax.set_xscale("log")
        _log_axis(ax.xaxis)
    (line,) = ax.plot(sizes * factor, etas, color=INK, lw=2, marker="o", ms=3,
                      label="effectiveness factor η")
    line.set_gid("effectiveness-vs-size")
    (goal,) = ax.plot([sizes[0] * factor, sizes[-1] * factor], [target, target], color=GREY,
                      ls="--", lw=1, label=f"target η = {target:g}")
    goal.set_gid("target-effectiveness")
    name = dimension.replace("_", " ")
    if largest is not None:
        (mark,) = ax.plot([largest * factor] * 2, [0, 1.05], color=RUST, ls=":", lw=1.4,
                          label=f"largest pellet: {name} {largest * factor:.4g} {unit}")
        mark.set_gid("largest-pellet")
    ax.set_ylim(0, 1.05)
    ax.set_xlabel(f"{name.capitalize()} [{unit}]")
    ax.set_ylabel("Effectiveness factor η [-]")
    ax2 = None
    if gradients is not None:
        ax2 = _twin(ax, SAGE, "Pressure gradient −dP/dz [Pa/m]", log=True)
        (grad,) = ax2.plot(sizes * factor, gradients, color=SAGE, lw=1.6, ls="-.",
                           label="pressure gradient −dP/dz (Ergun)")
        grad.set_gid("pressure-gradient")
    if note:
        _note(ax, note)
    _title(ax, "Pellet size trade-off")
    return _finish(fig, [ax] + ([ax2] if ax2 is not None else []), twin=ax2 is not None)


def sweep_svg(parameter: str, unit: str, rows: list[dict], log_scale: bool) -> bytes:
    """Effectiveness factor and generalized modulus along a /v1/sweep (rows as answered)."""
    fig = _figure()
    ax = fig.add_subplot()
    good = [r for r in rows if r["status"] == 200]
    x = np.array([r["parameter_value"]["value"] for r in good], dtype=float)
    shown, factor = (length_unit(float(np.max(np.abs(x))) if len(x) else 1.0)
                     if unit == "m" else (pretty_unit(unit), 1.0))
    if log_scale:
        ax.set_xscale("log")
        _log_axis(ax.xaxis)
    (line,) = ax.plot(x * factor, [r["effectiveness_factor"] for r in good], color=INK, lw=2,
                      marker="o", ms=3, label="effectiveness factor η")
    line.set_gid("sweep-effectiveness")
    ax.set_xlabel(f"{parameter} [{shown}]")
    ax.set_ylabel("Effectiveness factor η [-]")
    ax2 = _twin(ax, SAGE, "Generalized modulus Φ [-]", log=True)
    moduli = [r["generalized_modulus"] for r in good]
    if any(m > 0 for m in moduli):
        (mod,) = ax2.plot(x * factor, moduli, color=SAGE, lw=1.4, ls="--",
                          label="generalized modulus Φ")
        mod.set_gid("sweep-generalized-modulus")
    failed = len(rows) - len(good)
    if failed:
        _note(ax, f"{failed} of {len(rows)} points could not be computed "
                  f"(their errors are in the JSON or CSV answer)")
    _title(ax, f"Sweep of {parameter}")
    return _finish(fig, [ax, ax2], twin=True)

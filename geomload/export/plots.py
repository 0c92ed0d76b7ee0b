"""The report's 2-D plots (matplotlib, Agg canvas, imported lazily; no pyplot global state).

Each `plot_*` returns a matplotlib Figure with units on every axis; `save_figure` writes it
atomically as PNG (and SVG if asked); `make_plots` writes them all into a folder.
Elliptic shape: l(y) = l0 sqrt(1 - (2y/b)^2) with l0 = 4 L / (pi b) (Prandtl lifting-line).
Schrenk shape: the mean of the planform-shaped and elliptic loads of the same lift, plus the
basic (twist) loading where the loads carry it (NACA TM 948).
"""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np

from geomload.export import envelope_access as ea
from geomload.export.atomic import write_bytes_atomic
from geomload.textsafe import mpl_text

MAX_CASE_LINES = 8  # beyond this, cases are drawn as thin grey lines (the envelope tells the story)


def _figure(nrows=1, ncols=1, size=(7.5, 4.5), margins=(0.11, 0.97, 0.11, 0.91), **kw):
    """A Figure with fixed margins (left, right, bottom, top): a layout engine and legends
    placed "best" cost seconds on plots with many cases, fixed placement costs nothing."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, dpi=100)
    axes = fig.subplots(nrows, ncols, squeeze=False, **kw)
    l, r, b, t = margins
    fig.subplots_adjust(left=l, right=r, bottom=b, top=t, wspace=0.28, hspace=0.12)
    return fig, axes.ravel()


PNG_COMPRESS_LEVEL = 1  # zlib level of the PNG files: plots of flat colours compress almost
# as well at 1 as at the default 6 (measured on the sample's plots: 0-8 % larger files) and the
# encoder takes a fraction of the time (it was about a fifth of a plot's drawing time)


def figure_bytes(fig, fmt="png", dpi=100) -> bytes:
    buf = io.BytesIO()
    kw = {"pil_kwargs": {"compress_level": PNG_COMPRESS_LEVEL}} if fmt == "png" else {}
    fig.savefig(buf, format=fmt, dpi=dpi, **kw)
    return buf.getvalue()


def save_figure(fig, path, formats=("png",), inputs=()) -> list:
    """Write `fig` as path with each suffix in `formats`; returns the written paths."""
    out = []
    for fmt in formats:
        p = Path(path).with_suffix("." + fmt)
        write_bytes_atomic(p, figure_bytes(fig, fmt), inputs)
        out.append(p)
    return out


def plot_planform(stations, planform, lattice=None):
    """Top view of the semi-span: LE/TE, quarter-chord line, the cut stations and the MAC."""
    s, p = stations, planform
    fig, (ax,) = _figure(size=(7.5, 4.0))
    if lattice is not None:
        c = np.asarray(lattice.corners)
        for k in range(c.shape[0]):
            ax.plot(c[k, :, 1], c[k, :, 0], color="0.85", lw=0.5)
        for k in range(c.shape[1]):
            ax.plot(c[:, k, 1], c[:, k, 0], color="0.85", lw=0.5)
    ax.plot(s.y, s.x_le, "k-", lw=1.5, label="leading edge")
    ax.plot(s.y, s.x_te, "k-", lw=1.0, label="trailing edge")
    ax.plot(s.y, s.x_qc, "b--", lw=1.0, label="quarter-chord line")
    for i in range(s.n):
        ax.plot([s.y[i], s.y[i]], [s.x_le[i], s.x_te[i]], color="tab:orange", lw=0.9,
                label="cut stations" if i == 0 else None)
    ax.plot([p.y_mac, p.y_mac], [p.x_mac_le, p.x_mac_le + p.mac], color="tab:red", lw=2.5,
            label=f"MAC {p.mac:.3f} m")
    ax.set_xlabel("y, spanwise (m)")
    ax.set_ylabel("x, aft (m)")
    ax.invert_yaxis()
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_title(f"Planform (semi-span): S = {p.area:.3f} m², b = {p.span:.3f} m, AR = {p.aspect_ratio:.2f}")
    ax.legend(fontsize=8, loc="lower right")
    ax.grid(alpha=0.3)
    return fig


def _chord_at(stations, y):
    return np.interp(np.abs(y), stations.y, stations.chord)


def spanload_shapes(run, case_result):
    """Running lift (N/m, one case at its own dynamic pressure) along y, and the elliptic and
    Schrenk running loads of the same total lift (CL q S)."""
    a, lat = case_result.aero, run.lattice
    y = np.asarray(a.y, float)
    b, S = float(lat.b_ref), float(lat.s_ref)
    q = float(case_result.q_pa)
    semi = 0.5 * b
    yy = np.linspace(0.0, semi, 101)
    ell = 4 * a.CL * S / (np.pi * b) * np.sqrt(np.clip(1 - (yy / semi) ** 2, 0, None))
    plan = a.CL * S / _planform_area(run.stations, semi) * _chord_at(run.stations, yy)
    out = {"y": y, "case": np.asarray(a.cl_c, float) * q, "y_ref": yy, "elliptic": ell * q,
           "schrenk": 0.5 * (plan + ell) * q, "y_schrenk": yy, "schrenk_label": "Schrenk"}
    ld = case_result.loads
    sw = np.asarray(getattr(ld, "schrenk_lift_N_per_m", np.nan), float)
    if sw.shape == np.shape(ld.y) and np.all(np.isfinite(sw)):
        # the loads' own cross-check: Schrenk with the basic (twist) loading of this case
        out.update(schrenk=sw, y_schrenk=np.asarray(ld.y, float),
                   schrenk_label="Schrenk with twist")
    return out


def _planform_area(stations, semi):
    """Both-sides area of the chord distribution extended flat to the tip (m^2)."""
    y = np.append(stations.y, semi) if stations.y[-1] < semi else stations.y
    c = np.interp(y, stations.y, stations.chord)
    return 2 * float(np.sum(0.5 * (c[1:] + c[:-1]) * np.diff(y)))


def plot_spanwise(run, case_result=None):
    """Section cl per case (legend beside the axes, saying which cases are drawn), and the
    running lift of one case in N/m beside the elliptic and Schrenk loads of the same lift."""
    cr = case_result or ea.critical_case(run)
    fig, (a1, a2) = _figure(1, 2, size=(12, 4.6), margins=(0.06, 0.99, 0.17, 0.88))
    fig.subplots_adjust(wspace=0.62)  # room for the cl legend between the two axes
    shown = [cr] + [c for c in run.cases if c is not cr][:MAX_CASE_LINES - 1]
    for c in shown:
        a1.plot(c.aero.y, c.aero.cl, lw=1.2, label=mpl_text(c.name))
    a1.set_xlabel("y, spanwise (m)")
    a1.set_ylabel("section lift coefficient cl (-)")
    a1.set_title("Spanwise cl", fontsize=10)
    title = (f"all {len(run.cases)} cases" if len(shown) == len(run.cases)
             else f"{len(shown)} of {len(run.cases)} cases")
    a1.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0), title=title,
              title_fontsize=7)
    if len(shown) < len(run.cases):
        a1.text(0.0, -0.16, f"Drawn: the critical case and the first {len(shown) - 1} others in "
                "case order; every case is in loads/*.csv.", transform=a1.transAxes, fontsize=7,
                va="top")
    sh = spanload_shapes(run, cr)
    a2.plot(sh["y"], sh["case"], "k-", marker=".", lw=1.5, label=mpl_text(f"lattice: {cr.name}"))
    a2.plot(sh["y_ref"], sh["elliptic"], "b--", lw=1.0, label="elliptic, same lift")
    a2.plot(sh["y_schrenk"], sh["schrenk"], "g-.", lw=1.0,
            label=f"{sh['schrenk_label']}, same lift")
    a2.set_xlabel("y, spanwise (m)")
    a2.set_ylabel("running lift (N/m)")
    a2.set_title(mpl_text(f"Running lift, case {cr.name}") + "\n"
                 + f"(CL = {cr.aero.CL:.3f}, q = {cr.q_pa:.0f} Pa)", fontsize=10)
    a2.legend(fontsize=7, loc="lower left")
    for ax in (a1, a2):
        ax.grid(alpha=0.3)
        ax.axhline(0, color="0.5", lw=0.5)
    return fig


def plot_cl_alpha(run):
    """CL against alpha from the lattice sweep, with the trimmed cases marked."""
    fig, (ax,) = _figure(size=(6.5, 4.2))
    if run.alpha_sweep:
        al, cl = np.asarray(run.alpha_sweep, float).T
        ax.plot(al, cl, "k-", marker="o", ms=3, label="vortex lattice")
    ok = [c for c in run.cases if not c.stall_warning]
    bad = [c for c in run.cases if c.stall_warning]
    if ok:
        ax.plot([c.aero.alpha_deg for c in ok], [c.aero.CL for c in ok], "s", ms=5, color="C0",
                mfc="none", label=f"trimmed cases ({len(ok)})")
    if bad:
        ax.plot([c.aero.alpha_deg for c in bad], [c.aero.CL for c in bad], "x", ms=7, color="C3",
                label=f"trimmed cases beyond stall ({len(bad)})")
    a0 = run.cases[0].aero if run.cases else None
    if a0 is not None:
        ax.set_title(f"CL against alpha: CL_alpha = {a0.CL_alpha_per_rad:.3f} /rad, "
                     f"alpha_0L = {a0.alpha_zero_lift_deg:.2f}°")
    ax.set_xlabel("angle of attack alpha (deg)")
    ax.set_ylabel("wing lift coefficient CL (-)")
    ax.axhline(0, color="0.5", lw=0.5)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, loc="upper left")
    return fig


LOADS = (("shear_N", "shear", "shear V (N)"), ("bending_Nm", "bending", "bending M (N·m)"),
         ("torsion_Nm", "torsion", "torsion T (N·m)"))


def plot_loads(run):
    """V, M, T against span: each case (limit), the envelope limit (solid) and ultimate (dashed)."""
    from matplotlib.collections import LineCollection

    fig, axes = _figure(3, 1, size=(8, 9), margins=(0.11, 0.97, 0.06, 0.95), sharex=True)
    many = len(run.cases) > MAX_CASE_LINES
    env = ea.table(run.envelope) if run.envelope is not None else None
    for ax, (attr, q, label) in zip(axes, LOADS):
        if many:  # one collection for all cases: drawing cost no longer grows per artist
            segs = [np.column_stack([np.asarray(c.loads.y, float),
                                     np.asarray(getattr(c.loads, attr), float)]) for c in run.cases]
            ax.add_collection(LineCollection(segs, colors="0.7", linewidths=0.6,
                                             label=f"{len(segs)} cases, limit"))
            ax.autoscale_view()
        else:
            for c in run.cases:
                ax.plot(c.loads.y, getattr(c.loads, attr), lw=1.2, label=mpl_text(c.name))
        if env is not None:
            for side in ("max", "min"):
                ax.plot(env["y"], env[f"{q}_{side}"], "r-", lw=2.0,
                        label="envelope, limit" if side == "max" else None)
                ax.plot(env["y"], env[f"{q}_{side}_ult"], "r--", lw=1.2,
                        label="envelope, ultimate" if side == "max" else None)
        ax.set_ylabel(label)
        ax.axhline(0, color="0.5", lw=0.5)
        ax.grid(alpha=0.3)
    axes[0].legend(fontsize=7, ncol=2, loc="upper right")
    axes[0].set_title("Spanwise loads (limit unless marked); shear +up, bending +tip-up, torsion +nose-up")
    axes[-1].set_xlabel("y, spanwise (m)")
    for ax in axes[:-1]:
        ax.set_xlabel("y, spanwise (m)")
        ax.xaxis.label.set_visible(False)
    return fig


INPLANE = (("inplane_shear_N", "inplane_shear", "in-plane shear (N)"),
           ("inplane_bending_Nm", "inplane_bending", "in-plane bending (N·m)"))
INPLANE_SIGNS = ("In-plane (chordwise) loads, limit; shear positive aft (+x), "
                 "bending positive when the tip is pushed aft")


def plot_inplane(run):
    """In-plane (chordwise) shear and bending against span, with their sign convention."""
    from matplotlib.collections import LineCollection

    fig, axes = _figure(2, 1, size=(8, 6), margins=(0.12, 0.97, 0.09, 0.93), sharex=True)
    env = ea.table(run.envelope) if run.envelope is not None else None
    many = len(run.cases) > MAX_CASE_LINES
    for ax, (attr, q, label) in zip(axes, INPLANE):
        if many:  # one collection for all cases (as in plot_loads)
            segs = [np.column_stack([np.asarray(c.loads.y, float),
                                     np.asarray(getattr(c.loads, attr), float)]) for c in run.cases]
            ax.add_collection(LineCollection(segs, colors="0.7", linewidths=0.6,
                                             label=f"{len(segs)} cases, limit"))
            ax.autoscale_view()
        else:
            for c in run.cases:
                ax.plot(c.loads.y, getattr(c.loads, attr), lw=1.2, label=mpl_text(c.name))
        if env is not None:
            for side in ("max", "min"):
                ax.plot(env["y"], env[f"{q}_{side}"], "r-", lw=2.0,
                        label="envelope, limit" if side == "max" else None)
        ax.set_ylabel(label)
        ax.axhline(0, color="0.5", lw=0.5)
        ax.grid(alpha=0.3)
    axes[0].legend(fontsize=7, ncol=2, loc="upper right")
    axes[0].set_title(INPLANE_SIGNS, fontsize=9)
    for ax in axes:
        ax.set_xlabel("y, spanwise (m)")
    axes[0].xaxis.label.set_visible(False)
    return fig


VN_STYLE = {"stall-pos": ("C0", "-"), "stall-neg": ("C0", "--"), "maneuver": ("k", "-"),
            "gust-up": ("C2", "-."), "gust-down": ("C2", ":")}


def plot_vn(vn):
    """The V-n diagrams, one panel per mass and altitude: boundary curves and the labelled
    design points; one legend below the panels, every entry visible."""
    from matplotlib.lines import Line2D

    diagrams = ea.vn_diagrams(vn)
    n = max(len(diagrams), 1)
    ncols = 1 if n == 1 else 2
    nrows = (n + ncols - 1) // ncols
    fig, axes = _figure(nrows, ncols, size=(6.5 * ncols, 3.8 * nrows + 0.9),
                        margins=(0.07, 0.98, 0.9 / (3.8 * nrows + 0.9) + 0.06, 0.95),
                        sharey=True)
    fig.subplots_adjust(hspace=0.35, wspace=0.08)
    seen = {}
    for ax, d in zip(axes, diagrams):
        vmax = 0.0
        for name, (v, nn) in ea.vn_curves(d).items():
            col, ls = VN_STYLE.get(name, (f"C{3 + len(seen) % 6}", "-"))
            seen.setdefault(name, (col, ls))
            ax.plot(v, nn, lw=1.4, ls=ls, color=col)
            vmax = max(vmax, float(np.max(v)) if np.size(v) else 0.0)
        pts = sorted(ea.vn_points(d), key=lambda p: (p["v_eas"], p["n"]))
        for j, p in enumerate(pts):
            ax.plot(p["v_eas"], p["n"], "ko", ms=3.5)
            up = p["n"] >= 0
            ax.annotate(mpl_text(p["label"]), (p["v_eas"], p["n"]), textcoords="offset points",
                        xytext=(4, (6 + 8 * (j % 2)) * (1 if up else -1)),
                        va="bottom" if up else "top", fontsize=7,
                        bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none",
                              "alpha": 0.8})
        ax.set_xlim(0, 1.15 * vmax if vmax > 0 else None)
        ax.axhline(0, color="0.5", lw=0.5)
        ax.set_title(mpl_text(ea.vn_title(d)), fontsize=9)
        ax.set_xlabel("equivalent airspeed V_EAS (m/s)")
        ax.set_ylabel("load factor n (-)")
        ax.grid(alpha=0.3)
    for ax in axes[len(diagrams):]:
        ax.set_visible(False)
    handles = [Line2D([], [], color=c, ls=ls, lw=1.4, label=mpl_text(nm)) for nm, (c, ls) in seen.items()]
    handles.append(Line2D([], [], color="k", marker="o", ls="none", ms=3.5, label="design points"))
    fig.legend(handles=handles, loc="lower center", ncol=min(len(handles), 6), fontsize=8,
               frameon=False)
    fig.suptitle("V-n diagrams (limit load factors)", fontsize=10, y=0.995)
    return fig


def plot_names(run) -> tuple:
    """The names of the plots `build_figures` makes for `run` (file names without suffix)."""
    return ("planform", "spanwise", "cl_alpha", "loads", "inplane") + (
        ("vn",) if run.vn is not None else ())


def _formats(name) -> tuple:
    return ("png", "svg") if name == "vn" else ("png",)


def build_figures(run, names=None) -> dict:
    """name -> Figure (or the Exception that stopped it, so the report can say so); names: only
    those plots (None: every one)."""
    makers = {"planform": lambda: plot_planform(run.stations, run.planform, run.lattice),
              "spanwise": lambda: plot_spanwise(run), "cl_alpha": lambda: plot_cl_alpha(run),
              "loads": lambda: plot_loads(run), "inplane": lambda: plot_inplane(run)}
    if run.vn is not None:
        makers["vn"] = lambda: plot_vn(run.vn)
    out = {}
    for name, make in makers.items():
        if names is not None and name not in names:
            continue
        try:
            out[name] = make()
        except Exception as exc:  # one bad plot must not lose the run's other outputs
            out[name] = exc
    return out


def plot_images(run, names=None) -> dict:
    """name -> {format: file bytes} for every plot (PNG; the V-n diagram also SVG), or the
    Exception that stopped that plot; names: only those plots (None: every one). Writes no
    file, so it can run in another process."""
    out = {}
    for name, fig in build_figures(run, names).items():
        if isinstance(fig, Exception):
            out[name] = fig
            continue
        try:
            out[name] = {fmt: figure_bytes(fig, fmt) for fmt in _formats(name)}
        except Exception as exc:  # a drawing failure costs only this plot
            out[name] = exc
    return out


def write_plot_images(images: dict, folder, inputs=()) -> dict:
    """Write `plot_images`'s bytes as folder/<name>.<format> atomically; name -> PNG path, or the
    Exception kept from drawing. A write failure (full disk...) raises OutputError."""
    out = {}
    for name, v in images.items():
        if isinstance(v, dict):
            paths = []
            for fmt, data in v.items():
                p = Path(folder) / f"{name}.{fmt}"
                write_bytes_atomic(p, bytes(data), inputs)
                paths.append(p)
            out[name] = paths[0]
        else:
            out[name] = v
    return out


def make_plots(run, folder, inputs=()) -> dict:
    """Write every plot as folder/<name>.png (vn also .svg); returns name -> PNG path or Exception."""
    return write_plot_images(plot_images(run), folder, inputs)


def _sendable(images: dict) -> dict:
    """`plot_images`' dict with each Exception replaced by a RuntimeError carrying its text (an
    exception of any type may not survive the trip back to the parent process)."""
    return {k: (v if isinstance(v, dict) else RuntimeError(f"{type(v).__name__}: {v}"))
            for k, v in images.items()}


class PlotShare:
    """The plots of a run shared between the forked child, which draws them from the first on,
    and this process, which draws from the last on once its own writing is done and the child
    is still drawing (:func:`finish_plots`): each plot is claimed once, under a lock shared
    through the fork, so neither process waits while plots remain."""

    def __init__(self, names):
        import multiprocessing as mp

        self.names = tuple(names)
        self.claimed = mp.get_context("fork").Array("b", len(self.names))

    def claim(self, i: int) -> bool:
        with self.claimed.get_lock():
            if self.claimed[i]:
                return False
            self.claimed[i] = 1
            return True


def _child_plots(run, share: PlotShare) -> dict:
    """In the child: every plot not yet claimed, first to last."""
    out = {}
    for i, name in enumerate(share.names):
        if share.claim(i):
            out.update(_sendable(plot_images(run, (name,))))
    return out


def start_plot_process(run):
    """The run's plots in a forked child (`forked.ForkedJob`; None where fork or its shared
    memory is unavailable), shared with this process through a :class:`PlotShare`
    (``job.share``): :func:`finish_plots` gives every plot; ``job.stop()`` in a finally block
    ends the child."""
    from geomload.forked import ForkedJob

    try:
        share = PlotShare(plot_names(run))
    except (OSError, ValueError, ImportError):
        return None
    job = ForkedJob.start(_child_plots, (run, share), share.names, "plot")
    if job is not None:
        job.share = share
    return job


def finish_plots(run, job) -> dict:
    """`plot_images(run)` with the child of :func:`start_plot_process`: when the child is still
    drawing, this process draws the plots it has not claimed, last to first, then takes the
    child's. The same bytes either way; a plot the child claimed but did not deliver (it died)
    keeps the reason."""
    share, mine = job.share, {}
    if not job.conn.poll():  # still drawing: take from the back until the two meet
        for i in reversed(range(len(share.names))):
            if not share.claim(i):
                break
            mine.update(plot_images(run, (share.names[i],)))
    got = {**job.result(), **mine}
    return {n: got[n] for n in share.names if n in got}

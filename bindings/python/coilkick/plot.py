"""Plots of coilkick results (matplotlib), in a style of our own: switch-off waveforms with clamps
overlaid, every channel of a board, both ends of a cable, a PWM hold's ripple and the release from it, a fit to a bench capture (overlay), the clamp comparison chart, release time against peak switch voltage with the switch
rating and its derated limit, and Monte Carlo histograms. Every axis is labelled with its unit."""
import numpy as np

# A palette of our own: distinguishable hues at similar lightness.
PALETTE = ["#1b6f8a", "#c2571a", "#4d8c2a", "#8a3f8f", "#b8901a", "#2f4fa8", "#a8324a", "#5c6b73"]
LIMIT_COLOUR = "#a8324a"


def _plt():
    import matplotlib.pyplot as plt
    return plt


def _style(ax):
    ax.set_facecolor("#fbfaf7")
    ax.grid(True, color="#e2dfd8", linewidth=0.8)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)


def _results(items):
    """(label, RunResult) pairs from comparison rows, a dict, or a list of pairs."""
    if isinstance(items, dict):
        return list(items.items())
    out = []
    for it in items:
        if hasattr(it, "kind"):
            if it.result is not None:
                out.append((it.kind, it.result))
        else:
            out.append(it)
    return out


def _finish_voltage_current(fig, axes, rating_V, title, lower_label="coil current (mA)"):
    """Switch voltage (axes[0], with the switch's rating dashed) over coil current (axes[1], or what
    lower_label names): labels, style, legend, title."""
    av, ai = axes[0], axes[1]
    if np.isfinite(rating_V):
        av.axhline(rating_V, color=LIMIT_COLOUR, linestyle="--", linewidth=1, label="switch rating")
    av.set_ylabel("switch voltage (V)")
    ai.set_ylabel(lower_label)
    for ax in axes:
        _style(ax)
    av.legend(fontsize=8, frameon=False, loc="upper right")
    if title:
        fig.suptitle(title)
    fig.tight_layout()
    return fig


def switch_off(items, t_end_s=None, title=None):
    """Switch voltage (top) and coil current against the time after switch-off, one line per result;
    with the armature model a third panel shows the armature gap, each curve marked where the contact
    opens. items: comparison rows, {label: RunResult}, or [(label, RunResult)]. Returns the figure."""
    plt = _plt()
    pairs = _results(items)
    armature = any(len(r.armature_gap_m) for _, r in pairs)
    fig, axes = plt.subplots(3 if armature else 2, 1, sharex=True, figsize=(8, 8.5 if armature else 6))
    av, ai = axes[0], axes[1]
    if t_end_s is None:
        t = [r.metrics["current_decay_time_10pct_s"] for _, r in pairs]
        t += [r.metrics.get("contact_open_time_s", float("nan")) for _, r in pairs]
        t = [x for x in t if np.isfinite(x)]
        t_end_s = 1.3 * max(t) if t else None
    for k, (label, r) in enumerate(pairs):
        tt = (r.time_s - r.switch_off_at_s) * 1e3
        keep = tt >= 0 if t_end_s is None else (tt >= 0) & (tt <= t_end_s * 1e3)
        c = PALETTE[k % len(PALETTE)]
        av.plot(tt[keep], r.switch_voltage_V[keep], color=c, label=label, linewidth=1.5)
        ai.plot(tt[keep], r.coil_current_A[keep] * 1e3, color=c, linewidth=1.5)
        if armature and len(r.armature_gap_m):
            axes[2].plot(tt[keep], r.armature_gap_m[keep] * 1e3, color=c, linewidth=1.5)
            t_open = r.metrics.get("contact_open_time_s", float("nan"))
            if np.isfinite(t_open):
                gap_open = np.interp(t_open * 1e3, tt, r.armature_gap_m) * 1e3
                axes[2].plot([t_open * 1e3], [gap_open], marker="o", color=c, markersize=5)
    if armature:
        axes[2].set_ylabel("armature gap (mm)")
        axes[2].set_xlabel("time after the start of switch-off (ms); dot: contact opens")
    if not armature:
        ai.set_xlabel("time after the start of switch-off (ms)")
    rating = next((r.metrics["switch_voltage_rating_V"] for _, r in pairs), float("nan"))
    return _finish_voltage_current(fig, axes, rating, title)


def channels(run, t_end_s=None, title=None):
    """A board of several channels (scenario [[channel]]) from one run: each channel's switch voltage
    (top) and coil current against the time after the first switch-off edge, its release marked
    with a dot. Returns the figure."""
    plt = _plt()
    chans = run.channels
    if not chans:
        raise ValueError("channels: the run has one channel (give a scenario with [[channel]] tables)")
    t0 = min(c.switch_off_at_s for c in chans)
    if t_end_s is None:
        ends = [c.switch_off_at_s - t0 + c.metrics["current_decay_time_10pct_s"] for c in chans]
        ends = [x for x in ends if np.isfinite(x)]
        t_end_s = 1.3 * max(ends) if ends else None
    fig, (av, ai) = plt.subplots(2, 1, sharex=True, figsize=(8, 6))
    for k, c in enumerate(chans):
        tt = (c.time_s - t0) * 1e3
        keep = tt >= 0 if t_end_s is None else (tt >= 0) & (tt <= t_end_s * 1e3)
        colour = PALETTE[k % len(PALETTE)]
        av.plot(tt[keep], c.switch_voltage_V[keep], color=colour, label=c.name, linewidth=1.5)
        ai.plot(tt[keep], c.coil_current_A[keep] * 1e3, color=colour, linewidth=1.5)
        t_rel = c.metrics["release_time_s"]
        if np.isfinite(t_rel):
            t_mark = (c.switch_off_at_s - t0 + t_rel) * 1e3  # release is timed from the channel's own edge
            ai.plot([t_mark], [np.interp(t_mark, tt, c.coil_current_A * 1e3)], marker="o", color=colour, markersize=5)
    ai.set_xlabel("time after the first switch-off edge (ms); dot: release")
    return _finish_voltage_current(fig, (av, ai), run.metrics["switch_voltage_rating_V"], title)


def cable_ends(items, t_end_s=20e-6, title=None):
    """A coil at the far end of a cable (scenario [cable]): the switch voltage on the board (top) and
    the voltage across the coil's own terminals at the far end (`coil_in` less `coil_out`, bottom)
    against the time after switch-off in µs, over the first `t_end_s` (default 20 µs: the line's
    fronts and ringing; the coil's decay takes milliseconds), each curve's largest magnitude there marked. items:
    comparison rows, {label: RunResult}, [(label, RunResult)] or one RunResult. Returns the figure."""
    plt = _plt()
    pairs = _results([("run", items)] if hasattr(items, "metrics") else items)
    if not pairs:
        raise ValueError("cable_ends: no results to draw")
    fig, (av, ac) = plt.subplots(2, 1, sharex=True, figsize=(8, 6))
    for k, (label, r) in enumerate(pairs):
        try:
            coil = r.node_voltage_V("coil_in") - r.node_voltage_V("coil_out")
        except Exception as e:  # the node names say whether the run has a cable
            raise ValueError("cable_ends: the run %r has no cable (give the scenario a [cable] length)" % label) from e
        tt = (r.time_s - r.switch_off_at_s) * 1e6
        keep = (tt >= 0) & (tt <= t_end_s * 1e6)
        c = PALETTE[k % len(PALETTE)]
        av.plot(tt[keep], r.switch_voltage_V[keep], color=c, label=label, linewidth=1.2)
        ac.plot(tt[keep], coil[keep], color=c, linewidth=1.2)
        for ax, v in ((av, r.switch_voltage_V), (ac, coil)):
            if keep.any():
                i = np.flatnonzero(keep)[np.argmax(np.abs(v[keep]))]
                ax.plot([tt[i]], [v[i]], marker="o", color=c, markersize=4)
    ac.set_xlabel("time after the start of switch-off (µs); dot: largest magnitude shown")
    rating = next((r.metrics["switch_voltage_rating_V"] for _, r in pairs), float("nan"))
    return _finish_voltage_current(fig, (av, ac), rating, title, lower_label="voltage across the coil\nat the cable's far end (V)")


def hold(items, title=None):
    """A PWM-held coil, one line per result: the coil current over one steady hold period (left; its
    ripple, with the release current dashed) and the final release from the hold (right: coil current
    after the start of the switch-off). items as for switch_off; results without a hold are skipped.
    Returns the figure."""
    plt = _plt()
    pairs = [(label, r) for label, r in _results(items) if r.hold is not None]
    if not pairs:
        raise ValueError("hold: none of the results has a PWM hold (scenario [hold])")
    fig, (ar, af) = plt.subplots(1, 2, figsize=(11, 4))
    release = []
    for k, (label, r) in enumerate(pairs):
        c = PALETTE[k % len(PALETTE)]
        p = r.hold["period"]
        ar.plot(p["time_s"] * 1e6, p["coil_current_A"] * 1e3, color=c, linewidth=1.5, label=label)
        t = (r.time_s - r.switch_off_at_s) * 1e3
        keep = t >= 0
        af.plot(t[keep], r.coil_current_A[keep] * 1e3, color=c, linewidth=1.5, label=label)
        t_rel = r.metrics.get("release_time_s", float("nan"))
        if np.isfinite(t_rel):
            af.plot([t_rel * 1e3], [np.interp(t_rel * 1e3, t, r.coil_current_A) * 1e3], marker="o", color=c, markersize=5)
        i_rel = r.metrics["hold_minimum_current_A"] / r.metrics["hold_current_margin"]
        if np.isfinite(i_rel):
            release.append(i_rel)
    for ax in (ar, af):
        if release:
            ax.axhline(release[0] * 1e3, color=LIMIT_COLOUR, linestyle="--", linewidth=1, label="release current")
        _style(ax)
    ar.set_xlabel("time in one steady PWM period, from the drive's falling edge (µs)")
    ar.set_ylabel("coil current (mA)")
    af.set_xlabel("time after the start of the final switch-off (ms); dot: release")
    af.set_ylabel("coil current (mA)")
    ar.legend(fontsize=8, frameon=False)
    if title:
        fig.suptitle(title)
    fig.tight_layout()
    return fig


def comparison(rows, title=None):
    """Clamp comparison chart: release time and peak switch voltage per clamp kind (bars), with the rating."""
    plt = _plt()
    pairs = _results(rows)
    labels = [k for k, _ in pairs]
    release = [r.metrics["release_time_s"] * 1e3 for _, r in pairs]
    opens = [r.metrics.get("contact_open_time_s", float("nan")) * 1e3 for _, r in pairs]
    peak = [r.metrics["switch_voltage_peak_V"] for _, r in pairs]
    fig, (a1, a2) = plt.subplots(1, 2, figsize=(10, 4))
    y = np.arange(len(labels))
    if np.any(np.isfinite(opens)):
        # Armature model: coil current below release (proxy) and the contact actually opening.
        a1.barh(y - 0.2, release, height=0.4, color=PALETTE[0], label="current below release")
        a1.barh(y + 0.2, opens, height=0.4, color=PALETTE[2], label="contact opens")
        a1.legend(fontsize=8, frameon=False)
    else:
        a1.barh(y, release, color=PALETTE[0])
    a1.set_yticks(y, labels)
    a1.set_xlabel("time after switch-off (ms)")
    a2.barh(y, peak, color=PALETTE[1])
    a2.set_yticks(y, [""] * len(labels))
    a2.set_xlabel("peak switch voltage (V)")
    rating = next((r.metrics["switch_voltage_rating_V"] for _, r in pairs), float("nan"))
    if np.isfinite(rating):
        a2.axvline(rating, color=LIMIT_COLOUR, linestyle="--", linewidth=1, label="rating")
        a2.legend(fontsize=8, frameon=False)
    for ax in (a1, a2):
        _style(ax)
        ax.invert_yaxis()
    if title:
        fig.suptitle(title)
    fig.tight_layout()
    return fig


_TIME_LABELS = {"release_time_s": "coil current below release", "contact_open_time_s": "contact opens",
                "current_decay_time_10pct_s": "coil current below 10 %"}


def release_vs_peak(df, rating_V=None, derating=0.8, label_column=None, title=None, time_columns=("release_time_s",)):
    """Release time against peak switch voltage (e.g. a Zener-voltage sweep), with the switch rating and the
    derated limit as vertical lines. df: a DataFrame with switch_voltage_peak_V and the time_columns (several
    give one curve each, e.g. ("release_time_s", "contact_open_time_s") with the armature model)."""
    plt = _plt()
    fig, ax = plt.subplots(figsize=(7, 4.5))
    ok = df[df["error"] == ""] if "error" in df else df
    for k, column in enumerate(time_columns):
        ax.plot(ok["switch_voltage_peak_V"], ok[column] * 1e3, marker="o", markersize=3.5, color=PALETTE[(2 * k) % len(PALETTE)],
                linewidth=1.2, label=_TIME_LABELS.get(column, column) if len(time_columns) > 1 else None)
    if label_column is not None:
        for _, row in ok.iterrows():
            ax.annotate("%g" % row[label_column], (row["switch_voltage_peak_V"], row[time_columns[-1]] * 1e3),
                        fontsize=7, xytext=(3, 3), textcoords="offset points")
    if rating_V is None and "switch_voltage_rating_V" in ok and len(ok):
        rating_V = float(ok["switch_voltage_rating_V"].iloc[0])
    if rating_V is not None and np.isfinite(rating_V):
        ax.axvline(rating_V, color=LIMIT_COLOUR, linestyle="--", linewidth=1, label="switch rating %.0f V" % rating_V)
        ax.axvline(derating * rating_V, color=LIMIT_COLOUR, linestyle=":", linewidth=1,
                   label="derated limit %.0f %%" % (100 * derating))
        ax.legend(fontsize=8, frameon=False)
    if len(time_columns) > 1:
        ax.legend(fontsize=8, frameon=False)
    ax.set_xlabel("peak switch voltage (V)")
    ax.set_ylabel("release time (ms)" if len(time_columns) == 1 else "time after switch-off (ms)")
    _style(ax)
    if title:
        ax.set_title(title)
    fig.tight_layout()
    return fig


_SCALE = {"_V": (1, "V"), "_A": (1e3, "mA"), "_s": (1e3, "ms"), "_J": (1e3, "mJ"), "_W": (1, "W"), "_Hz": (1, "Hz")}


def histograms(result, metrics=("switch_voltage_peak_V", "release_time_s", "clamp_energy_J"), bins=30, title=None):
    """Monte Carlo histograms of a ToleranceResult (samples only; corners marked as ticks)."""
    plt = _plt()
    fig, axes = plt.subplots(1, len(metrics), figsize=(4 * len(metrics), 3.5))
    axes = np.atleast_1d(axes)
    runs = result.runs[result.runs["error"] == ""]
    samples = runs[runs["label"].str.startswith("sample")]
    corners = runs[runs["label"].str.startswith("corner")]
    for ax, m in zip(axes, metrics):
        factor, unit = next((v for k, v in _SCALE.items() if m.endswith(k)), (1, ""))
        ax.hist(samples[m].astype(float) * factor, bins=bins, color=PALETTE[0], alpha=0.85)
        for v in corners[m].astype(float) * factor:
            ax.axvline(v, color=PALETTE[1], linewidth=0.6, alpha=0.6)
        ax.set_xlabel("%s (%s)" % (m, unit) if unit else m)
        ax.set_ylabel("samples")
        _style(ax)
    if title:
        fig.suptitle(title)
    fig.tight_layout()
    return fig


def overlay(fit, title=None):
    """A fit to a bench capture (coilkick.fit): the measured and the fitted model's coil current
    against the time after the switch-voltage edge (top; switch-on: the armature's flight marked as
    measured), and their difference in units of the capture's noise with the ±3σ band (bottom).
    Returns the figure."""
    plt = _plt()
    f = fit.frame
    fig, (top, bottom) = plt.subplots(2, 1, figsize=(9, 6), sharex=True, gridspec_kw={"height_ratios": [2, 1]})
    t = f.time_after_edge_s.to_numpy() * 1e3
    top.plot(t, f.measured_current_A * 1e3, color=PALETTE[5], linewidth=0.8, alpha=0.7, label="measured")
    top.plot(t, f.model_current_A * 1e3, color=PALETTE[1], linewidth=1.8, label="fitted model")
    motion = fit.measured_armature_motion
    if fit.edge == "switch-on" and np.isfinite(motion.get("end_s", float("nan"))):
        top.axvspan(motion.start_s * 1e3, motion.end_s * 1e3, color=PALETTE[2], alpha=0.15, label="armature's flight (measured dip)")
    bottom.plot(t, f.residual, color=PALETTE[7], linewidth=0.8, label="measured − model")
    for band in (-3.0, 3.0):
        bottom.axhline(band, color=LIMIT_COLOUR, linestyle="--", linewidth=1)
    off = fit.edge == "switch-off"
    if fit.time_zero == "drive":
        edge = "falling edge of the drive" if off else "rising edge of the drive"
    else:
        edge = "rising edge of the switch voltage" if off else "falling edge of the switch voltage"
    bottom.set_xlabel("time after the %s (ms)" % edge)
    top.set_ylabel("coil current (mA)")
    bottom.set_ylabel("residual (noise units; ±3σ dashed)")
    for ax in (top, bottom):
        _style(ax)
    top.legend(fontsize=8, frameon=False)
    top.set_title(title or "%s fitted to %s: residual RMS %.2f of the noise" % (fit.edge, fit.capture_name, fit.residual_rms))
    fig.tight_layout()
    return fig

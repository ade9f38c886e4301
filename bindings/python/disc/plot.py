"""matplotlib helpers for the common pictures; each returns the figure."""
import numpy as np


def _figure(title, xlabel, ylabel):
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(8, 4))
    ax.set_title(title)
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.grid(True, alpha=0.3)
    return fig, ax


def waveforms(result, signals, title="Waveforms"):
    """Signals against time, labelled with their units."""
    fig, ax = _figure(title, "time (s)", ", ".join(sorted({result.unit(s) for s in signals})))
    for s in signals:
        ax.plot(result.time, result[s], label=f"{s} [{result.unit(s)}]")
    ax.legend()
    return fig


def settled_cycle(result, signals, frequency, title="One settled cycle"):
    """Signals over the last mains period of the run."""
    t = result.time
    keep = t >= t[-1] - 1.0 / frequency
    fig, ax = _figure(title, "time (s)", ", ".join(sorted({result.unit(s) for s in signals})))
    for s in signals:
        ax.plot(t[keep], result[s][keep], label=f"{s} [{result.unit(s)}]")
    ax.legend()
    return fig


def plate_iv(result, stack, plates=(1,), last_fraction=0.1, title=None):
    """Current against plate voltage (I-V trajectory) of some plates of a stack, over the last
    part of the run. Records the needed signals when the circuit named its output."""
    fig, ax = _figure(title or f"{stack}: plate I-V trajectories", "plate voltage (V)", "A")
    t = result.time
    keep = t >= t[-1] - last_fraction * (t[-1] - t[0])
    for n in plates:
        v = -result[f"vrev:{stack}#{n}"][keep]
        i = result[f"iarm:{stack}#1"][keep] if f"iarm:{stack}#1" in result else result[f"i:{stack}"][keep]
        ax.plot(v, i, label=f"plate {n}")
    ax.legend()
    return fig


def temperatures(result, stacks, title="Hottest plate temperature"):
    """Hottest-plate temperature of each stack, in degC."""
    fig, ax = _figure(title, "time (s)", "degC")
    for s in stacks:
        ax.plot(result.time, np.asarray(result[f"temp:{s}"]) - 273.15, label=s)
    ax.legend()
    return fig


def arm_shares(result, stack, title=None):
    """Share of each parallel arm in the stack's average current (bar chart)."""
    arms = []
    k = 1
    while f"iarm:{stack}#{k}" in result:
        arms.append(np.mean(result[f"iarm:{stack}#{k}"]))
        k += 1
    total = sum(arms)
    fig, ax = _figure(title or f"{stack}: current share per arm", "arm", "share of the current (%)")
    ax.bar(range(1, len(arms) + 1), [100 * a / total for a in arms])
    return fig

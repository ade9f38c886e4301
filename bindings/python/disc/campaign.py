"""Campaigns: one netlist run as many variants, on every local core or on a Dask cluster.

    import disc
    res = disc.campaign("netlists/signalling-parallel-stacks.disc", builds=200,
                        tolerance=["C1 capacitance -20% +50%", "MAINS rms 10%"])
    res.table          # pandas DataFrame, one row per variant (units in res.table.attrs)
    print(res.text)    # the summary, the restorer's reading first

Each variant follows from (campaign seed, variant index) alone (a counter-based generator), so
the table is the same for any number of threads or workers and any order they finish in.
"""
import json
import pathlib

from . import _disc
from .circuit import Circuit


class CampaignResult:
    """A campaign's table and summary."""

    def __init__(self, net, columns):
        self._net = net
        self._columns = columns
        self.text, summary, self.html, self.csv = _disc.campaign_summary(net, columns)
        self.summary = json.loads(summary)

    @property
    def table(self):
        """One row per variant as a pandas DataFrame (index: variant); units in .attrs["units"]."""
        import pandas as pd

        data = {name: values for name, _, values in self._columns}
        df = pd.DataFrame(data)
        df.index = df["variant"].astype("int64")
        df.index.name = "variant"
        df.attrs["units"] = {name: unit for name, unit, _ in self._columns}
        return df

    @property
    def reading(self):
        """The plain-language reading (list of sentences)."""
        return list(self.summary["reading"])

    def write(self, folder):
        """Writes campaign.csv, campaign.json and campaign.html as the whole of folder, swapped
        into place at once with a manifest (as the disc program writes its folders)."""
        return list(_disc.write_files(str(folder), [
            ("campaign.csv", self.csv.encode()),  # as written: records end with CRLF
            ("campaign.json", json.dumps(self.summary, indent=2).encode()),
            ("campaign.html", self.html.encode())]))


def _statements(builds, seed, vary, tolerance, keep_plates):
    out = [f"vary {v}" for v in (vary or [])]
    out += [f"tolerance {t}" for t in (tolerance or [])]
    head = ""
    if builds is not None:
        head += f" builds={int(builds)}"
    if seed is not None:
        head += f" seed={int(seed)}"
    if keep_plates:
        head += " plates=keep"
    if head:
        out.append("campaign" + head)
    return out


def _source(source):
    """(netlist text or None, name, native netlist) of a path, netlist text or Circuit."""
    if isinstance(source, Circuit):
        # A circuit may have been changed since it was read: it has no text a worker could
        # rebuild it from.
        return None, source._net.path, source._net.clone()
    if isinstance(source, pathlib.Path) or (isinstance(source, str) and "\n" not in source
                                            and source.endswith(".disc")):
        path = pathlib.Path(source)
        return path.read_text(), str(path), _disc.load(str(path))
    return source, "<text>", _disc.parse(source, "<text>")


def _chunk(text, name, statements, first, count, stop, threads, basis="auto", reltol=0.0):
    """One worker's share: rebuilds the netlist from its text and runs variants
    [first, first + count)."""
    net = _disc.parse(text, name)
    for s in statements:
        net.statement(s)
    return _disc.run_campaign(net, threads=threads, stop=stop, first=first, count=count,
                              basis=basis, reltol=reltol)


def _join(parts):
    columns = []
    for k, (name, unit, values) in enumerate(parts[0]):
        if isinstance(values, list):
            joined = [w for p in parts for w in p[k][2]]
        else:
            import numpy as np

            joined = np.concatenate([p[k][2] for p in parts])
        columns.append((name, unit, joined))
    return columns


def campaign(source, builds=None, seed=None, vary=None, tolerance=None, keep_plates=False,
             threads=0, stop=0.0, progress=None, client=None, chunk=None, worker_threads=1,
             basis="auto", reltol=0.0):
    """Runs a campaign: the netlist's own (`campaign`, `vary`, `tolerance` statements) with these
    additions, in the language's words: vary=["RRELAYS resistance 40 60 80"],
    tolerance=["C1 capacitance -20% +50%", "MAINS rms 10%"], builds=1000, seed=7,
    keep_plates=True (no new plates per build).

    source: a .disc path, netlist text or a Circuit. threads: local worker threads (0: every
    core). stop: transient end time, s (0: the netlist's run; a stop time asks for the
    transient). basis: "periodic" (each variant's settled period, no switch-on surge; a variant
    without one runs the transient and its "basis" column says why), "transient" (from cold),
    or "auto" (periodic when the circuit has a period and no stop is given). reltol: each
    variant's relative tolerance (0: the netlist's transient's). progress(done, total): called at
    most every 0.1 s locally, and as each chunk returns from a cluster; a False return cancels
    a local run (KeyboardInterrupt, as Ctrl-C).

    client: a dask.distributed Client. The variants are sent in chunks of `chunk` indices
    (default: about four chunks per worker); each worker rebuilds the circuit from the netlist
    text (files it includes or uses must exist at the same paths on the workers) and runs its
    chunk with `worker_threads` threads. The rows come back in variant order, identical to a
    local run's. A Circuit cannot go to a cluster (it may differ from its file): give the path
    or the text."""
    text, name, net = _source(source)
    statements = _statements(builds, seed, vary, tolerance, keep_plates)
    for s in statements:
        net.statement(s)
    if client is None:
        return CampaignResult(net, _disc.run_campaign(net, threads=int(threads), stop=float(stop),
                                                      progress=progress, basis=str(basis),
                                                      reltol=float(reltol)))
    if text is None:
        raise ValueError("a cluster run rebuilds the circuit from netlist text on each worker: "
                         "give a .disc path or netlist text, not a Circuit")
    total = _disc.campaign_variants(net)
    if chunk is None:
        workers = max(1, len(client.scheduler_info().get("workers", {})))
        chunk = max(1, -(-total // (4 * workers)))
    chunk = int(chunk)
    if chunk < 1:
        raise ValueError(f"chunk must be at least 1 variant, got {chunk}")
    starts = list(range(0, total, chunk))
    futures = [client.submit(_chunk, text, name, statements, first, min(chunk, total - first),
                             float(stop), int(worker_threads), str(basis), float(reltol),
                             pure=False) for first in starts]
    if progress is not None:
        from distributed import as_completed

        done = 0
        for f in as_completed(futures):
            done += min(chunk, total - starts[futures.index(f)])
            progress(done, total)
    parts = client.gather(futures)  # in submission order: variant order
    return CampaignResult(net, _join(parts))

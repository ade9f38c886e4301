"""The slow analyses' results: a warm-up with its summary, and a power-up plan, with numpy
columns. Every figure comes from the library (its summary, its plan's JSON); nothing is
recomputed here."""
import json

import numpy as np


class WarmUp:
    """A warm-up as ``run warm-up`` makes it (docs/engine.md, "Slow-state envelope").

    ``series`` is a Result with one row per slow step (each signal's period mean under its own
    name, "min(...)" and "max(...)" over the period); ``first_limits`` the ratings reached, in
    order of time; ``trends`` each figure at the start and the end.
    """

    def __init__(self, series, summary, report_json):
        self.series = series
        self._summary = summary
        self._report = report_json

    @property
    def duration(self):
        """The duration asked for, s."""
        return self._summary["duration_s"]

    @property
    def end_time(self):
        """Where the run ended, s (the duration unless it stopped early)."""
        return self._summary["end_time_s"]

    @property
    def stopped_by(self):
        """Why the run ended early ("" when it ran to the end)."""
        return self._summary["stopped_by"]

    @property
    def first_limits(self):
        """Each rating first reached (the supply report's verdicts and the hottest plate against
        its limit), in order of time: dicts with what, time_s, limit and unit."""
        return list(self._summary["first_limits"])

    def limit_times(self):
        """{what: time_s} of every rating reached during the warm-up."""
        return {c["what"]: c["time_s"] for c in self._summary["first_limits"]}

    @property
    def trends(self):
        """Figures at the start and the end: dicts with what, unit, start and end."""
        return list(self._summary["trends"])

    @property
    def failures(self):
        """Runaways and destructions, as Result.failures."""
        return self.series.failures

    @property
    def failed(self):
        """True when a plate was destroyed (the run ended there)."""
        return self.series.failed

    @property
    def stats(self):
        """Work counters: slow steps, periodic solves, shooting iterations, wall time."""
        return dict(self._summary["stats"])

    def text(self):
        """The warm-up block of ``disc run``'s text report."""
        return self._summary["text"]

    def report(self):
        """The supply report of the settled period at the end, as a dict (None without an
        output statement)."""
        return json.loads(self._report) if self._report else None

    def __repr__(self):
        return (f"<WarmUp: {len(self.series.time)} slow steps to {self.end_time:g} s, "
                f"{len(self.first_limits)} limits reached>")


class PowerUpPlan:
    """A power-up plan (docs/power-up.md): the steps to follow on a variac, the leakage and
    temperatures to expect, when it is safe to go on, the verdict and the safety cautions.

    The dict-valued fields are those of ``disc power-up --json``; ``table`` gives the steps as
    numpy columns under the same keys.
    """

    def __init__(self, plan):
        self._plan = plan
        self._json = json.loads(plan.json())

    @property
    def verdict(self):
        """"re-form" (follow the schedule) or "replace" (do not re-form the stack)."""
        return self._json["verdict"]

    @property
    def replace(self):
        """True when the stack should be replaced rather than re-formed."""
        return self._json["verdict"] == "replace"

    @property
    def verified(self):
        """True when the whole schedule, run once more through the warm-up envelope, stays
        inside every limit."""
        return self._json["verified"]

    @property
    def reasons(self):
        """Why replace, or notes on the schedule."""
        return list(self._json["reasons"])

    @property
    def steps(self):
        """The steps in order: dicts with level, fraction, start_s, duration_s,
        leakage_start_A, leakage_end_A, hottest_plate_C, reverse_per_plate_W,
        capacitor_peak_V, forming_end and settled."""
        return [dict(s) for s in self._json["steps"]]

    @property
    def table(self):
        """The steps as numpy columns, keyed as in ``steps``."""
        keys = [k for k in (self._json["steps"][0] if self._json["steps"] else {})]
        return {k: np.array([s[k] for s in self._json["steps"]]) for k in keys}

    @property
    def limits(self):
        """Each limit the schedule is kept under: what, unit, peak (highest on the verified
        schedule), limit, allowed (the margin's share) and rule."""
        return [dict(x) for x in self._json["limits"]]

    @property
    def go_on(self):
        """When it is safe to go on from a step: its hold is over and the leakage changes by
        less than leakage_per_min (a fraction) and the hottest plate by less than
        temperature_K_per_min a minute."""
        return {"leakage_per_min": self._json["settle_leakage_per_min"],
                "temperature_K_per_min": self._json["settle_temperature_K_per_min"]}

    @property
    def total_time(self):
        """s, from switch-on to full voltage held."""
        return self._json["total_time_s"]

    @property
    def schedule(self):
        """The schedule in netlist words: a ``schedule="..."`` value for the variac-fed
        source."""
        return self._json["schedule"]

    @property
    def stack(self):
        return self._json["stack"]

    @property
    def source(self):
        """The variac-fed source."""
        return self._json["source"]

    @property
    def full_level(self):
        """The source's full level, in level_unit."""
        return self._json["full_level"]

    @property
    def level_unit(self):
        return self._json["level_unit"]

    @property
    def ambient_c(self):
        return self._json["ambient_C"]

    @property
    def margin(self):
        """The fraction of each limit the schedule may use."""
        return self._json["margin"]

    @property
    def warnings(self):
        """The supply report's warnings at full voltage at the end."""
        return list(self._json["warnings"])

    @property
    def cautions(self):
        """Safety cautions for the work (mains, HT, charged capacitors, selenium fumes)."""
        return list(self._json["cautions"])

    @property
    def disclaimer(self):
        return self._json["disclaimer"]

    @property
    def envelope_runs(self):
        """Warm-up runs the planner made, the verification included."""
        return self._json["envelope_runs"]

    def to_dict(self):
        """The plan as ``disc power-up --json`` prints it."""
        return json.loads(self._plan.json())

    def text(self):
        """The plan as ``disc power-up`` prints it."""
        return self._plan.text()

    def json(self):
        return self._plan.json()

    def __repr__(self):
        return (f"<PowerUpPlan {self.stack}: {self.verdict}, {len(self.steps)} steps, "
                f"{self.total_time:.0f} s{'' if self.verified else ', not verified'}>")

# Type stubs of the disc package (values in SI units unless a name says otherwise).
from os import PathLike
from typing import Any, Callable, Iterable, Sequence

import numpy as np
import numpy.typing as npt

__version__: str

class NetlistError(ValueError):
    diagnostics: list[tuple[str, int, int, str]]
    file: str
    line: int
    column: int

class SimulationError(RuntimeError): ...

class TraceError(ValueError):
    file: str
    line: int
    column: int
    column_name: str

class PlateType:
    name: str
    material: str
    description: str
    notes: dict[str, str]
    fails_to: str
    mechanism: str
    def get(self, key: str) -> float: ...
    def set(self, key: str, value: float) -> None: ...
    @staticmethod
    def parameter_names() -> list[str]: ...
    def rated_current(self) -> float: ...
    def to_json(self) -> str: ...
    def save(self, path: str) -> None: ...
    def derive(self, name: str, changes: dict[str, float]) -> PlateType: ...

class Element:
    name: str
    @property
    def kind(self) -> str: ...
    @property
    def parameters(self) -> list[str]: ...
    def __getattr__(self, key: str) -> float: ...
    def __setattr__(self, key: str, value: float) -> None: ...

class Result:
    @property
    def time(self) -> npt.NDArray[np.float64]: ...
    def __getitem__(self, signal: str) -> npt.NDArray[np.float64]: ...
    def __contains__(self, signal: str) -> bool: ...
    @property
    def signals(self) -> list[str]: ...
    def unit(self, signal: str) -> str: ...
    @property
    def stats(self) -> dict[str, Any]: ...
    @property
    def failures(self) -> list[dict[str, Any]]: ...
    @property
    def failed(self) -> bool: ...
    def report(self) -> dict[str, Any]: ...
    def report_text(self) -> str: ...
    def to_csv(self, path: str | PathLike[str]) -> None: ...

Value = float | int | str

class Circuit:
    def add_plate_type(self, plate_type: PlateType) -> Circuit: ...
    def __init__(self, name: str = ...) -> None: ...
    def resistor(self, name: str, a: str, b: str, resistance: Value) -> Element: ...
    def capacitor(self, name: str, a: str, b: str, capacitance: Value) -> Element: ...
    def inductor(self, name: str, a: str, b: str, inductance: Value, resistance: Value | None = ...) -> Element: ...
    def coupling(self, name: str, first: str, second: str, k: Value) -> Element: ...
    def transformer(self, name: str, p1: str, n1: str, p2: str, n2: str, ratio: Value,
                    r1: Value | None = ..., r2: Value | None = ..., leakage1: Value | None = ...,
                    leakage2: Value | None = ..., magnetizing: Value | None = ...) -> Element: ...
    def voltage(self, name: str, p: str, n: str, dc: Value | None = ..., amplitude: Value | None = ...,
                rms: Value | None = ..., frequency: Value | None = ..., phase: Value | None = ...,
                offset: Value | None = ..., points: str | Sequence[tuple[float, float]] | None = ...,
                on: Value | None = ..., off: Value | None = ..., resistance: Value | None = ...,
                inductance: Value | None = ...,
                schedule: str | Sequence[tuple[Value, Value]] | None = ...) -> Element: ...
    def mains(self, name: str, p: str, n: str, rms: Value, frequency: Value,
              resistance: Value | None = ..., inductance: Value | None = ..., on: Value | None = ...,
              schedule: str | Sequence[tuple[Value, Value]] | None = ...) -> Element: ...
    def current(self, name: str, p: str, n: str, dc: Value | None = ..., amplitude: Value | None = ...,
                rms: Value | None = ..., frequency: Value | None = ..., phase: Value | None = ...,
                offset: Value | None = ..., points: str | Sequence[tuple[float, float]] | None = ...,
                on: Value | None = ..., off: Value | None = ...,
                schedule: str | Sequence[tuple[Value, Value]] | None = ...) -> Element: ...
    def battery(self, name: str, p: str, n: str, emf: Value, resistance: Value | None = ...) -> Element: ...
    def diode(self, name: str, anode: str, cathode: str, saturation_current: Value | None = ...,
              ideality: Value | None = ..., series_resistance: Value | None = ...,
              junction_capacitance: Value | None = ..., built_in_potential: Value | None = ...,
              grading_exponent: Value | None = ..., transit_time: Value | None = ...,
              breakdown_voltage: Value | None = ..., breakdown_current: Value | None = ...,
              thermal_resistance: Value | None = ..., heat_capacity: Value | None = ...,
              temperature: Value | None = ...,
              nominal_temperature: Value | None = ...) -> Element: ...
    def stack(self, name: str, anode: str, cathode: str, type: str, plates: int | None = ...,
              parallel: int | None = ..., mode: str | None = ..., spread: float | None = ...,
              seed: int | None = ..., forming: float | None = ..., stored_years: float | None = ...,
              stored_temp: Value | None = ...,
              hours: float | None = ..., age_temp: Value | None = ..., cooling: float | None = ...,
              **spreads: float) -> Element: ...
    def lamp(self, name: str, a: str, b: str, rated_power: Value, rated_voltage: Value,
             filament_temp: Value | None = ..., exponent: float | None = ...,
             time_constant: Value | None = ..., conduction: float | None = ...) -> Element: ...
    def valve_load(self, name: str, plus: str, minus: str, rated_current: Value,
                   rated_voltage: Value, exponent: float | None = ..., warm_up: Value | None = ...,
                   on: Value | None = ..., warmth: float | None = ...) -> Element: ...
    def switch(self, name: str, a: str, b: str, close: Value | None = ..., open: Value | None = ...,
               ron: Value | None = ..., roff: Value | None = ...) -> Element: ...
    def output(self, positive: str, negative: str, load: str, kind: str | None = ...) -> None: ...
    def statement(self, text: str) -> None: ...
    def __getitem__(self, name: str) -> Element: ...
    @property
    def elements(self) -> list[str]: ...
    @property
    def nodes(self) -> list[str]: ...
    def clone(self) -> Circuit: ...
    def check(self) -> None: ...
    def run_transient(self, stop: float, record: Iterable[str] | None = ..., method: str = ...,
                      start: str = ..., max_step: float = ..., reltol: float = ...,
                      abstol: float = ..., temperature_abstol: float = ...,
                      progress: Callable[[float, float], bool | None] | None = ...) -> Result: ...
    def run_periodic(self, record: Iterable[str] | None = ..., reltol: float = ...,
                     at: float = ...) -> Result: ...
    def run_warm_up(self, duration: float, record: Iterable[str] | None = ...,
                    reltol: float = ..., progress: Callable[[float, float], bool] | None = ...
                    ) -> tuple[Result, str, list[str]]: ...
    def run_op(self, record: Iterable[str] | None = ...) -> Result: ...
    def run(self, progress: Callable[[float, float], bool | None] | None = ...
            ) -> tuple[list[Result], dict[str, Any] | None]: ...
    def write_files(self, folder: str | PathLike[str]) -> list[str]: ...

def load(path: str | PathLike[str], sandbox: bool = ...) -> Circuit: ...
def parse(text: str, name: str = ..., sandbox: bool = ...) -> Circuit: ...
def plate_types() -> list[PlateType]: ...
def plate_type(name: str) -> PlateType: ...
def reference_circuit(name: str) -> Circuit: ...
def load_plate_types(path: str | PathLike[str]) -> list[PlateType]: ...

class Trace:
    source: str
    voltage: npt.NDArray[np.float64]
    current: npt.NDArray[np.float64]
    time: npt.NDArray[np.float64]
    temperature: npt.NDArray[np.float64]
    lines: list[int]
    dynamic: bool
    def __len__(self) -> int: ...

class PlateCurve:
    def __init__(self, type: PlateType, forming: float = ...) -> None: ...
    def current(self, volts: npt.ArrayLike, kelvin: npt.ArrayLike) -> Any: ...
    def voltage(self, amps: npt.ArrayLike, kelvin: npt.ArrayLike) -> Any: ...

class PlateHealth:
    reference: str
    temperature: float
    rated_current: float
    forward_drop: float
    forward_drop_healthy: float
    reverse_voltage: float
    reverse_current: float
    reverse_current_healthy: float
    forward_ratio: float
    reverse_ratio: float
    forming_estimate: float
    level: str
    findings: list[str]

class FittedParameter:
    name: str
    unit: str
    stage: str
    value: float
    start: float
    uncertainty: float
    low: float
    high: float
    interval: str
    log_scale: bool
    at_bound: bool
    identifiable: bool
    expanded: float
    def covers(self, x: float) -> bool: ...

class FitCurve:
    trace: str
    dynamic: bool
    time: npt.NDArray[np.float64]
    voltage: npt.NDArray[np.float64]
    measured: npt.NDArray[np.float64]
    fitted: npt.NDArray[np.float64]

class PlateFit:
    type: PlateType
    parameters: list[FittedParameter]
    points: int
    rms_weighted: float
    rms_current: float
    stages: list[str]
    warnings: list[str]
    health: PlateHealth
    curves: list[FitCurve]
    evaluations: int
    def report_text(self) -> str: ...
    def report_json(self) -> str: ...
    def plots(self) -> list[tuple[str, str]]: ...
    def write(self, dir: str) -> list[str]: ...

class ReplacementRow:
    load_fraction: float
    output_original: float
    output_replacement: float
    current_original: float
    current_replacement: float
    ripple_original: float
    ripple_replacement: float
    surge_original: float
    surge_replacement: float
    dissipation_original: float
    dissipation_replacement: float

class ReplacementDesign:
    file: str
    stacks: list[str]
    load: str
    quantity: str
    unit: str
    target: float
    target_kind: str
    present: float
    diode_current: float
    verdicts: list[dict[str, Any]]
    silicon_alone: float
    resistor_exact: float
    output_exact: float
    hand_estimate: float
    e12: float
    e24: float
    output_e12: float
    output_e24: float
    resistor_power: float
    resistor_rating: float
    peak_reverse: float
    piv_required: float
    surge_simulated: float
    surge_required: float
    rows: list[ReplacementRow]
    netlist: str
    warnings: list[str]
    cautions: list[str]
    runs: int
    def text(self) -> str: ...
    def json(self) -> str: ...

def load_trace(path: str | PathLike[str]) -> Trace: ...
def trace(voltage: npt.ArrayLike, current: npt.ArrayLike, time: npt.ArrayLike | None = ...,
          temperature_c: npt.ArrayLike | None = ..., source: str = ...) -> Trace: ...
def fit_plate(traces: str | PathLike[str] | Trace | Sequence[str | PathLike[str] | Trace], *,
              plates: int = ..., like: str | PlateType | None = ..., material: str = ...,
              area_cm2: float | None = ..., name: str = ..., temperature_c: float = ...,
              noise_relative: float = ..., noise_floor: float | None = ...,
              dynamic: bool = ..., fixed: Sequence[str] = ...) -> PlateFit: ...
def model_current(type: PlateType, trace: Trace, plates: int = ...,
                  temperature_c: float = ...) -> npt.NDArray[np.float64]: ...
def judge_plate_health(plate: PlateType, healthy: PlateType, kelvin: float = ...) -> PlateHealth: ...
def replace_stacks(path: str | PathLike[str], stacks: str | Sequence[str], *,
                   diode: str | None = ..., loads: Iterable[float] = ...,
                   target: str = ...) -> ReplacementDesign: ...

class CampaignResult:
    text: str                   # the summary, the restorer's reading first
    summary: dict[str, Any]     # the summary as campaign.json
    html: str
    csv: str
    @property
    def table(self) -> Any: ...  # pandas.DataFrame, one row per variant; units in .attrs["units"]
    @property
    def reading(self) -> list[str]: ...
    def write(self, folder: str | PathLike[str]) -> list[str]: ...

def campaign(source: str | PathLike[str] | Circuit, builds: int | None = ...,
             seed: int | None = ..., vary: Sequence[str] | None = ...,
             tolerance: Sequence[str] | None = ..., keep_plates: bool = ..., threads: int = ...,
             stop: float = ..., progress: Callable[[int, int], bool | None] | None = ...,
             client: Any = ..., chunk: int | None = ...,
             worker_threads: int = ...) -> CampaignResult: ...

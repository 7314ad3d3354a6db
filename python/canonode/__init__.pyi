"""Type stubs of canonode's Python interface (see canonode/__init__.py)."""

import os
from fractions import Fraction
from typing import Any, Dict, Iterable, List, Mapping, Optional, Tuple, Union

import numpy as np
import numpy.typing as npt

__version__: str

Text = Union[str, "os.PathLike[str]"]
Number = Union[int, float, complex, Fraction, str]
Overtones = Union[int, range, Tuple[int, int]]

class InputError(ValueError):
    """Bad input; the message is the located diagnostic with carets."""

    line: Optional[int]
    column: Optional[int]
    source: str

class Reduction:
    Q: str
    Q_latex: str
    latex: str
    text: str
    json: Dict[str, Any]
    names: List[str]
    variable: str
    parameters: List[str]
    prefactor: str
    principal_parts: List[Dict[str, Any]]
    standard_form: Dict[str, str]
    schrodinger: Optional[Dict[str, Any]]
    def Q_at(self, z: npt.ArrayLike, **params: Number) -> Any: ...
    def symbols(self) -> Dict[str, Any]: ...
    def to_sympy(self, what: str = ...) -> Any: ...
    def _repr_latex_(self) -> str: ...

class SingularPoint:
    json: Dict[str, Any]
    where: str
    infinity: bool
    value: Optional[complex]
    kind: str
    pole_order: Optional[int]
    rank: Optional[Fraction]
    exponents: List[str]
    exponent_values: List[Optional[complex]]
    unknown_exponents: List[str]
    unknown_exponent_values: List[Optional[complex]]
    labels: Any

class Classification:
    json: Dict[str, Any]
    text: str
    latex: str
    class_id: str
    class_name: str
    points: List[SingularPoint]
    canonical: Optional[Dict[str, Any]]
    methods: List[Dict[str, str]]
    def _repr_latex_(self) -> str: ...
    def _repr_html_(self) -> str: ...

class Mode:
    json: Dict[str, Any]
    n: int
    omega: complex
    converged: bool
    reason: Optional[str]
    method: str
    evidence: Dict[str, Any]
    check: Optional[Dict[str, Any]]
    estimate: Optional[Dict[str, Any]]
    family: Optional[Dict[str, Any]]

class Spectrum:
    json: Dict[str, Any]
    omega: npt.NDArray[np.complex128]
    modes: List[Mode]
    frequency: str
    boundary: str
    method: str
    seconds: float
    @property
    def converged(self) -> npt.NDArray[np.bool_]: ...
    def __len__(self) -> int: ...
    def _repr_html_(self) -> str: ...

class Scan(Dict[str, np.ndarray]):
    json: Dict[str, Any]
    parameter: str
    frequency: str
    reasons: List[List[Optional[str]]]
    errors: List[Optional[str]]
    def to_pandas(self) -> Any: ...
    def _repr_html_(self) -> str: ...

class CheckResult:
    holds: bool
    changed: List[str]
    diff: str
    note: Optional[str]
    def __bool__(self) -> bool: ...

def reduce(
    text: Text,
    *,
    var: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
) -> Reduction: ...
def classify(
    text: Text,
    *,
    at: Optional[Mapping[str, Number]] = ...,
    exponents: Optional[str] = ...,
    boundary: Optional[str] = ...,
    var: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
) -> Classification: ...
def spectrum(
    equation: Text,
    at: Mapping[str, Number],
    overtones: Overtones = ...,
    *,
    method: str = ...,
    boundary: Optional[str] = ...,
    guess: Optional[complex] = ...,
    tol: float = ...,
    var: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
    couple: Optional[Text] = ...,
    link: Union[str, Iterable[str]] = ...,
    angular_index: int = ...,
    angular_guess: Optional[complex] = ...,
    ends: Optional[str] = ...,
    region: Optional[Tuple[float, float, float, float]] = ...,
    grid: int = ...,
) -> Spectrum: ...
def scan(
    equation: Text,
    vary: str,
    values: Iterable[Number],
    at: Optional[Mapping[str, Number]] = ...,
    overtones: Overtones = ...,
    *,
    check: bool = ...,
    guess: Optional[complex] = ...,
    tol: float = ...,
    var: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
) -> Scan: ...
class Scattering(Dict[str, Any]):
    json: Dict[str, Any]
    errors: List[Optional[str]]
    frequency: str
    near: str
    far: str
    def to_pandas(self) -> Any: ...

def scatter(
    equation: Text,
    at: Mapping[str, Number],
    omega: Tuple[Number, Number, Number],
    *,
    sum_l: Optional[Tuple[int, int]] = ...,
    multipole: str = ...,
    wkb_order: int = ...,
    var: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
    couple: Optional[Text] = ...,
    link: Union[str, Iterable[str]] = ...,
    angular_index: int = ...,
    angular_guess: Optional[complex] = ...,
) -> Scattering: ...
def emit(
    text: Text,
    lang: str = ...,
    *,
    what: str = ...,
    name: Optional[str] = ...,
    about: Optional[str] = ...,
    series: Optional[str] = ...,
    exponents: Optional[str] = ...,
    var: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
) -> str: ...
def record(
    source: Text,
    *,
    path: Optional[str] = ...,
    about: Optional[str] = ...,
    series: Optional[str] = ...,
    exponents: Optional[str] = ...,
    subst: Optional[str] = ...,
    at_infinity: bool = ...,
    dxdz: Optional[str] = ...,
    frequency: Optional[str] = ...,
) -> str: ...
def check(record_path: Text, *, source: Optional[str] = ...) -> CheckResult: ...

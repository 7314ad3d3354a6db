"""canonode for Python: paste a linear second-order ODE, get its normal form,
singular points, class, spectra and code.

Every function takes the equation as text (a whole file with ``var``/``param``
declarations, or a bare equation ``LHS = RHS`` when ``var=`` names its
variable) or as a :class:`pathlib.Path` to a file, and calls the Rust library
in-process: no subprocess, no text in between for numbers. Long computations
release the GIL (threads run them in parallel) and stop waiting on Ctrl-C.

>>> import canonode
>>> r = canonode.reduce("z^2*w'' + z*w' + (z^2 - nu^2)*w = 0", var="z")
>>> r.Q
'(z^2 - nu^2 + 1/4)/z^2'

Bad input raises :class:`InputError` (a ``ValueError``) with ``.line``,
``.column`` and the located message with carets; a mode that did not
converge is ``nan`` in ``.omega`` with its reason in ``.modes[i].reason``.

NumPy (and every other module not needed to call the library) is imported
only when first used, so ``import canonode`` stays fast.
"""

from __future__ import annotations

import numbers as _numbers
import os as _os

from . import _native
from ._native import InputError

__version__ = _native.__version__

__all__ = [
    "InputError",
    "reduce",
    "classify",
    "spectrum",
    "scan",
    "scatter",
    "emit",
    "record",
    "check",
    "Reduction",
    "Classification",
    "SingularPoint",
    "Spectrum",
    "Mode",
    "Scan",
    "CheckResult",
]


# --------------------------------------------------------------------------
# Inputs


def _source(text):
    """(text, display name) of an equation given as text or as a path."""
    if isinstance(text, _os.PathLike):
        name = _os.fspath(text)
        with open(name, encoding="utf-8") as f:
            return f.read(), name
    if not isinstance(text, str):
        raise TypeError(f"the equation is text or a path, not {type(text).__name__}")
    return text, "<input>"


def _input(text, var=None, subst=None, at_infinity=False, dxdz=None, frequency=None):
    body, name = _source(text)
    return (body, name, var, subst, bool(at_infinity), dxdz, frequency)


def _parts(value):
    """(shown, re, im) of a parameter value: exact decimal text of each part.

    An int is exact, a float is the decimal of its shortest repr (the same
    number as typing it on the command line), a Fraction is p/q, a string is
    read as an exact decimal or ratio.
    """
    if isinstance(value, bool):
        raise TypeError("a parameter value is a number, not a bool")
    if isinstance(value, _numbers.Integral):
        t = str(int(value))
        return t, t, "0"
    if isinstance(value, _numbers.Rational):
        t = f"{value.numerator}/{value.denominator}"
        return t, t, "0"
    if isinstance(value, _numbers.Real):
        t = repr(float(value))
        return t, t, "0"
    if isinstance(value, _numbers.Complex):
        c = complex(value)
        return repr(c), repr(c.real), repr(c.imag)
    if isinstance(value, str):
        return value, value, "0"
    raise TypeError(f"a parameter value is a number, not {type(value).__name__}")


def _values(mapping):
    out = []
    for name, v in (mapping or {}).items():
        shown, re_, im = _parts(v)
        out.append((str(name), shown, re_, im))
    return out


def _seed(guess):
    if guess is None:
        return None
    c = complex(guess)
    return (repr(c.real), repr(c.imag))


def _overtones(overtones):
    """An int, a range (step 1) or a (first, last) pair as an inclusive pair."""
    if isinstance(overtones, _numbers.Integral):
        return int(overtones), int(overtones)
    if isinstance(overtones, range):
        if overtones.step != 1 or len(overtones) == 0:
            raise ValueError("overtones: give a non-empty range with step 1, e.g. range(0, 8)")
        return overtones.start, overtones.stop - 1
    first, last = overtones
    return int(first), int(last)


def _np():
    import numpy

    return numpy


def _esc(text):
    import html

    return html.escape(str(text))


def _complex(pair):
    return complex(pair[0], pair[1]) if pair is not None else None


# --------------------------------------------------------------------------
# reduce


class Reduction:
    """The normal form ψ'' + Q ψ = 0 of an equation and its derivation.

    Attributes: ``Q`` (text in the input language), ``Q_latex``, ``latex``
    and ``text`` (the whole derivation), ``variable``, ``parameters``,
    ``prefactor`` (y = prefactor · ψ, text), ``principal_parts`` (one dict
    per pole: ``at``, ``order``, ``coefficients``), ``standard_form``
    ({``p``, ``q``}), ``schrodinger`` (with ``dxdz=``: ``V``, ``W``, …) and
    ``json`` (the document of ``canonode reduce --format json``).
    """

    def __init__(self, raw, inp):
        self._inp = inp
        self.json = raw["json"]
        self.text = raw["text"]
        self.latex = raw["latex"]
        self.names = list(raw["names"])
        self.Q_latex = raw["Q_latex"]
        nf = self.json["normal_form"]
        self.Q = nf["Q"]
        self.principal_parts = nf["principal_parts"]
        self.prefactor = self.json["prefactor"]["text"]
        self.standard_form = self.json["standard_form"]
        self.schrodinger = self.json["schrodinger"]
        self.variable = self.json["variable"]
        self.parameters = list(self.json["parameters"])

    def Q_at(self, z, **params):
        """Q at the points ``z`` (a number or an array of any shape) with every
        parameter given as a keyword (scalars). Returns complex values of the
        shape of ``z``; ``nan`` where Q has a pole."""
        np = _np()
        za = np.asarray(z, dtype=np.complex128)
        raw = _native.q_at(self._inp, _values(params), np.ascontiguousarray(za.ravel()).tobytes())
        out = np.frombuffer(raw, dtype=np.complex128).reshape(za.shape).copy()
        return out[()] if out.ndim == 0 else out

    def symbols(self):
        """The sympy symbols of the variable and the parameters, by name."""
        import sympy

        return {n: sympy.Symbol(n) for n in self.names}

    def to_sympy(self, what="Q"):
        """An expression of sympy (needed) for ``Q`` (default), ``p``, ``q``,
        ``V`` or ``W`` (the last two with ``dxdz=``)."""
        texts = {"Q": self.Q, "p": self.standard_form["p"], "q": self.standard_form["q"]}
        if self.schrodinger:
            texts.update(V=self.schrodinger["V"], W=self.schrodinger["W"])
        if what not in texts:
            raise ValueError(f"to_sympy: '{what}' is not one of {', '.join(texts)}")
        return _text_to_sympy(texts[what], self.names)

    def _repr_latex_(self):
        return f"$$\\psi'' + Q\\,\\psi = 0,\\qquad Q = {self.Q_latex}$$"

    def __repr__(self):
        return f"<canonode.Reduction Q = {self.Q}>"


def _text_to_sympy(text, names):
    """An expression of the input language (``*``, ``^``, ``I``, names) in sympy."""
    import re

    import sympy

    local = {"I": sympy.I}
    body = text
    # Names become placeholders first, so that a name that is a Python
    # keyword or a sympy function (lambda, E, S, beta …) stays a symbol.
    for i, n in enumerate(sorted(names, key=len, reverse=True)):
        token = f"_cn{i}_"
        body = re.sub(rf"(?<![\w]){re.escape(n)}(?![\w])", token, body)
        local[token] = sympy.Symbol(n)
    return sympy.sympify(body.replace("^", "**"), locals=local)


def reduce(text, *, var=None, subst=None, at_infinity=False, dxdz=None, frequency=None) -> Reduction:
    """The normal form of a linear second-order ODE.

    ``text``: the equation (a program with declarations, or with ``var=`` a
    bare ``LHS = RHS`` whose other names become parameters), or a path.
    ``subst``: a change of variable ``"OLD=EXPR"`` (e.g. ``"z=1/t"``);
    ``at_infinity``: look at infinity through z = 1/t; ``dxdz``: dx/dz for the
    Schrödinger form (e.g. ``"1/f"``); ``frequency``: the frequency in
    V = ω² − W. Raises :class:`InputError` on bad input.
    """
    inp = _input(text, var, subst, at_infinity, dxdz, frequency)
    return Reduction(_native.reduce(inp), inp)


# --------------------------------------------------------------------------
# classify


class SingularPoint:
    """One singular point: ``where`` (exact text), ``infinity``, ``value``
    (complex with values given, else None), ``kind`` ('regular',
    'irregular', …), ``rank`` (a Fraction), ``pole_order``, ``exponents``
    (exact texts, of ψ), ``exponent_values`` (complex or None each),
    ``unknown_exponents`` and ``unknown_exponent_values`` (of the unknown
    y), ``labels`` (with a frequency), and ``json`` (all fields)."""

    def __init__(self, d):
        self.json = d
        self.where = d["where"]
        self.infinity = d["infinity"]
        self.value = _complex(d["value"])
        self.kind = d["kind"]
        self.pole_order = d["pole_order"]
        from fractions import Fraction

        self.rank = Fraction(d["rank"]) if d["rank"] is not None else None
        self.exponents = [e["exact"] for e in d["exponents"]]
        self.exponent_values = [_complex(e["value"]) for e in d["exponents"]]
        self.unknown_exponents = [e["exact"] for e in d["unknown_exponents"]]
        self.unknown_exponent_values = [_complex(e["value"]) for e in d["unknown_exponents"]]
        self.labels = d.get("labels")

    def __repr__(self):
        return f"<SingularPoint {self.where}: {self.kind}, rank {self.rank}, exponents {', '.join(self.exponents)}>"


class Classification:
    """Singular points, class and canonical form of an equation.

    ``points`` (list of :class:`SingularPoint`), ``class_id``,
    ``class_name``, ``canonical`` (dict or None: the canonical form and its
    parameters), ``methods`` (suggested methods with sources), ``text``,
    ``latex``, and ``json`` (the document of ``canonode classify --format json``).
    """

    def __init__(self, raw):
        self.json = raw["json"]
        self.text = raw["text"]
        self.latex = raw["latex"]
        self.class_id = self.json["class"]
        self.class_name = self.json["class_name"]
        self.points = [SingularPoint(p) for p in self.json["singular_points"]]
        self.canonical = self.json["canonical"]
        self.methods = self.json["methods"]

    def _repr_latex_(self):
        return self.latex

    def _repr_html_(self):
        rows = []
        for p in self.points:
            ex = ", ".join(self.json_exponent_cells(p))
            rows.append(
                "<tr>"
                + "".join(
                    f"<td>{_esc(str(c))}</td>"
                    for c in (p.where, p.kind, p.rank if p.rank is not None else "", p.pole_order, ex)
                )
                + "</tr>"
            )
        head = "".join(f"<th>{h}</th>" for h in ("point", "kind", "rank", "pole order", "exponents of ψ"))
        return (
            f"<p><b>{_esc(self.class_name)}</b> ({_esc(self.class_id)})</p>"
            f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(rows)}</tbody></table>"
        )

    @staticmethod
    def json_exponent_cells(p):
        out = []
        for t, v in zip(p.exponents, p.exponent_values):
            out.append(t if v is None else f"{t} ≈ {v:.6g}")
        return out

    def __repr__(self):
        return f"<canonode.Classification {self.class_id}: {len(self.points)} singular points>"


def classify(text, *, at=None, exponents=None, boundary=None, var=None, subst=None, at_infinity=False, dxdz=None, frequency=None) -> Classification:
    """Singular points (location, kind, rank, exponents), the class and the canonical form.

    ``at``: parameter values (a dict) for numeric locations and exponents;
    ``exponents``: choices for the canonical form, ``"POINT=CHOICE,…"``;
    ``boundary``: ``"qnm"`` or ``"bound"`` picks the exponents of that
    boundary problem. Other keywords as in :func:`reduce`.
    """
    inp = _input(text, var, subst, at_infinity, dxdz, frequency)
    return Classification(_native.classify(inp, _values(at) if at is not None else None, exponents, boundary))


# --------------------------------------------------------------------------
# spectrum


class Mode:
    """One mode: ``n``, ``omega`` (complex, nan when not converged),
    ``converged``, ``reason`` (why not, else None), ``method``, ``evidence``
    (dict: depth, change on doubling, residual, seed …), ``check`` (the
    second method's result, dict or None), ``estimate`` (WKB, dict or None),
    ``family`` (periodic problems: multiplier, parity and index, else None)."""

    def __init__(self, d):
        self.json = d
        self.n = d["n"]
        self.converged = d["converged"]
        self.omega = _complex(d["omega"]) if d["omega"] is not None else complex(float("nan"), float("nan"))
        self.reason = d["reason"]
        self.method = d["method"]
        self.evidence = d["evidence"]
        self.check = d.get("check")
        self.estimate = d.get("estimate")
        self.family = d.get("family")

    def __repr__(self):
        if self.converged:
            return f"<Mode n={self.n} omega={self.omega!r} [{self.method}]>"
        return f"<Mode n={self.n} NOT CONVERGED: {self.reason}>"


class Spectrum:
    """Modes of a boundary problem.

    ``omega``: a NumPy complex array, one entry per overtone asked for (nan
    where not converged); ``modes``: the :class:`Mode` objects with their
    evidence; ``converged``: a bool array; ``frequency``, ``boundary``,
    ``method``; ``seconds``: time spent in the library; ``json``: the
    document of ``canonode spectrum --format json``.
    """

    def __init__(self, raw):
        self.json = raw["json"]
        self.seconds = raw["seconds"]
        self.modes = [Mode(m) for m in self.json["modes"]]
        self.omega = _np().array([m.omega for m in self.modes], dtype=complex)
        self.frequency = self.json["frequency"]
        self.boundary = self.json["boundary"]
        self.method = self.json["method"]

    @property
    def converged(self):
        return _np().array([m.converged for m in self.modes], dtype=bool)

    def _repr_html_(self):
        rows = []
        for m in self.modes:
            if m.converged:
                w = f"{m.omega.real:.12g} {'-' if m.omega.imag < 0 else '+'} {abs(m.omega.imag):.12g} i"
                chk = m.check or {}
                agree = chk.get("agreement")
                ev = f"{m.method}" + (f", check {chk['method']} agrees to {agree:.1e}" if agree is not None else "")
            else:
                w, ev = "not converged", m.reason or ""
            rows.append(f"<tr><td>{m.n}</td><td>{_esc(w)}</td><td>{_esc(ev)}</td></tr>")
        return (
            f"<p>{_esc(self.method)}</p><table><thead><tr><th>n</th>"
            f"<th>{_esc(self.frequency)}</th><th>evidence</th></tr></thead><tbody>{''.join(rows)}</tbody></table>"
        )

    def __len__(self):
        return len(self.modes)

    def __repr__(self):
        return f"<canonode.Spectrum {self.boundary} {self.frequency}: {list(self.omega)}>"


def _coupled(couple, link, angular_index, angular_guess):
    """The angular side of a coupled solve for the native call, or None."""
    links = [link] if isinstance(link, str) else [str(x) for x in link]
    if couple is None:
        if links or angular_guess is not None:
            raise ValueError("link= and angular_guess= need couple= (the angular equation)")
        return None
    atext, aname = _source(couple)
    return (atext, aname if aname != "<input>" else "<couple>", links, int(angular_index), _seed(angular_guess))


def spectrum(
    equation,
    at,
    overtones=0,
    *,
    method="auto",
    boundary=None,
    guess=None,
    tol=1e-10,
    var=None,
    subst=None,
    at_infinity=False,
    dxdz=None,
    frequency=None,
    couple=None,
    link=(),
    angular_index=0,
    angular_guess=None,
    ends=None,
    region=None,
    grid=48,
) -> Spectrum:
    """Quasinormal modes (``boundary="qnm"``), bound states (``"bound"``),
    quasi-bound states of massive fields (``"quasi-bound"``) or the
    characteristic values of periodic coefficients (``"periodic"``: Mathieu,
    Hill; solutions of period T and 2T, with their parity). By default:
    ``"periodic"`` when the coefficients are trigonometric in the real
    variable, else ``"qnm"``.

    ``at``: values of every parameter except the frequency, e.g.
    ``{"M": 1, "l": 2, "s": 2}``; ``overtones``: an int, a ``range`` or a
    (first, last) pair; ``method``: ``"auto"``, ``"cf"`` (continued
    fraction), ``"integrate"``, ``"wkb"``, ``"eikonal"`` or
    ``"collocation"`` (bound states); ``guess``: a seed for the lowest
    overtone; ``tol``: relative tolerance on the frequency.

    ``couple``: an angular equation (text or path) sharing the separation
    constant, with ``link``: one or more ``"NAME = EXPR"`` (e.g.
    ``"lam = A + a^2*omega^2 - 2*a*m*omega"`` and ``"c = a*omega"`` for
    Kerr), ``angular_index`` (0: the lowest angular eigenvalue) and
    ``angular_guess``; ``at`` then also holds the angular equation's own
    parameters.

    ``ends``: the two ends of the boundary problem and their conditions,
    ``"LEFT[:COND]..RIGHT[:COND]"`` as the command line's ``--ends`` (e.g.
    ``"1..inf:normalisable"``); by default they follow from the roles of the
    singular points, and the document's ``notes`` say which were chosen.

    ``region``: ``(re_from, re_to, im_from, im_to)``: every mode in that
    rectangle with no guess (the global spectral method on ``grid``
    intervals and, where the recurrence has a continued fraction, the
    overtone ladder it seeds; each mode polished and checked; as
    ``--region``); the modes then carry ``family``, ``mirror_of`` and
    ``found_by`` in their ``json``, and the document says in ``limits``
    what the search cannot exclude and in ``unsettled`` which overtones
    were sought and not settled.
    """
    inp = _input(equation, var, subst, at_infinity, dxdz, frequency)
    coupled = _coupled(couple, link, angular_index, angular_guess)
    box = None if region is None else (tuple(float(x) for x in region), int(grid))
    raw = _native.spectrum(inp, _values(at), _overtones(overtones), method, boundary, _seed(guess), float(tol), coupled, ends, box)
    return Spectrum(raw)


# --------------------------------------------------------------------------
# scan


class Scan(dict):
    """A scan as a dict of NumPy arrays:

    - ``"value"``: the varied parameter's values (P),
    - ``"n"``: the overtone numbers (N),
    - ``"omega"``: complex (P × N), nan where not converged,
    - ``"converged"``: bool (P × N),
    - ``"check"``: the direct-integration check, complex (P × N), nan where none;

    and ``reasons`` (P × N lists of text or None), ``errors`` (per point,
    text or None), ``parameter``, ``frequency``, ``json`` (the document of
    ``canonode scan --format json``). ``to_pandas()`` gives one row per point
    and overtone.
    """

    def __init__(self, doc, overtones):
        np = _np()
        super().__init__()
        self.json = doc
        self.parameter = doc["parameter"]
        self.frequency = doc["frequency"]
        pts = doc["points"]
        ns = list(range(overtones[0], overtones[1] + 1))
        nan = complex(float("nan"), float("nan"))
        omega = np.full((len(pts), len(ns)), nan, dtype=np.complex128)
        check = np.full((len(pts), len(ns)), nan, dtype=np.complex128)
        conv = np.zeros((len(pts), len(ns)), dtype=bool)
        self.reasons = [[None] * len(ns) for _ in pts]
        self.errors = [p["error"] for p in pts]
        for i, p in enumerate(pts):
            for m in p["modes"]:
                j = m["n"] - overtones[0]
                if m["omega"] is not None:
                    omega[i, j] = _complex(m["omega"])
                conv[i, j] = m["converged"]
                self.reasons[i][j] = m["reason"]
                if m["check"] is not None:
                    check[i, j] = _complex(m["check"]["omega"])
            if p["error"] is not None:
                for j in range(len(ns)):
                    self.reasons[i][j] = p["error"]
        self["value"] = np.array([p["value"] for p in pts], dtype=float)
        self["n"] = np.array(ns, dtype=int)
        self["omega"] = omega
        self["converged"] = conv
        self["check"] = check

    def to_pandas(self):
        """A pandas DataFrame (pandas needed): one row per point and overtone."""
        import pandas

        rows = []
        for i, v in enumerate(self["value"]):
            for j, n in enumerate(self["n"]):
                w = self["omega"][i, j]
                rows.append(
                    {
                        self.parameter: v,
                        "n": int(n),
                        self.frequency: w,
                        "re": w.real,
                        "im": w.imag,
                        "converged": bool(self["converged"][i, j]),
                        "check": self["check"][i, j],
                        "reason": self.reasons[i][j],
                    }
                )
        return pandas.DataFrame(rows)

    def _repr_html_(self):
        np = _np()
        bad = int((~self["converged"]).sum())
        return (
            f"<p>scan of {_esc(self.frequency)} over {_esc(self.parameter)}: "
            f"{len(self['value'])} points × {len(self['n'])} overtones, {bad} not converged "
            f"({_esc(self.parameter)} from {np.min(self['value']):.6g} to {np.max(self['value']):.6g})</p>"
        )

    def __repr__(self):
        return f"<canonode.Scan {self.frequency} over {self.parameter}: {len(self['value'])} points × {len(self['n'])} overtones>"


def scan(
    equation,
    vary,
    values,
    at=None,
    overtones=0,
    *,
    check=True,
    guess=None,
    tol=1e-10,
    var=None,
    subst=None,
    at_infinity=False,
    dxdz=None,
    frequency=None,
) -> Scan:
    """Quasinormal modes over values of one parameter, in parallel, each
    mode followed from its neighbour (continuation).

    ``vary``: the parameter's name; ``values``: its values (any iterable of
    real numbers, e.g. ``numpy.linspace``; each taken exactly as its
    shortest decimal); ``at``: the other parameters (not the frequency);
    ``check``: the direct-integration check at every point. Ctrl-C stops
    before the next point.
    """
    inp = _input(equation, var, subst, at_infinity, dxdz, frequency)
    vals = [(f"[{i}]",) + _parts(v) for i, v in enumerate(values)]
    ot = _overtones(overtones)
    doc = _native.scan(inp, str(vary), vals, _values(at), ot, bool(check), _seed(guess), float(tol))
    return Scan(doc, ot)


# --------------------------------------------------------------------------
# scatter


class Scattering(dict):
    """Scattering data at real frequencies as a dict of NumPy arrays:
    ``"omega"``, ``"transmission"`` (|T|², the greybody factor),
    ``"reflection"`` (|R|²), ``"flux_error"`` (|R|² + |T|² − 1, the check),
    ``"matching_change"``, ``"wkb_transmission"`` (the second method, nan
    without a barrier) and, with ``sum_l``, ``"cross_section"``; nan where a
    frequency has no value (``errors`` says why). ``json``: the document of
    ``canonode scatter --format json``.
    """

    def __init__(self, doc):
        np = _np()
        self.json = doc
        pts = doc["points"]
        f = lambda k: np.array([p.get(k) if p.get(k) is not None else np.nan for p in pts], dtype=float)
        super().__init__(
            omega=f("omega"),
            transmission=f("transmission"),
            reflection=f("reflection"),
            flux_error=f("flux_error"),
            matching_change=f("matching_change"),
            wkb_transmission=f("wkb_transmission"),
        )
        if doc["sum"] is not None:
            self["cross_section"] = f("cross_section")
        self.errors = [p["error"] for p in pts]
        self.frequency = doc["frequency"]
        self.near, self.far = doc["near"], doc["far"]

    def to_pandas(self):
        import pandas

        return pandas.DataFrame({k: v for k, v in self.items()})

    def __repr__(self):
        return f"<canonode.Scattering {self.frequency} from {self.far} into {self.near}: {len(self['omega'])} frequencies>"


def scatter(
    equation,
    at,
    omega,
    *,
    sum_l=None,
    multipole="l",
    wkb_order=6,
    var=None,
    subst=None,
    at_infinity=False,
    dxdz=None,
    frequency=None,
    couple=None,
    link=(),
    angular_index=0,
    angular_guess=None,
) -> Scattering:
    """Transmission and reflection at real frequencies (greybody factors).

    ``omega``: ``(start, stop, step)``, each taken exactly as its shortest
    decimal (as ``--omega START:STOP:STEP``); ``at``: every other parameter;
    ``sum_l``: ``(first, last)`` multipoles of ``multipole`` summed into the
    absorption cross-section. ``couple``, ``link``, ``angular_index``,
    ``angular_guess``: an angular equation sharing the separation constant,
    solved at every frequency (as in :func:`spectrum`; Kerr superradiance
    with the spheroidal eigenvalue). Ctrl-C stops before the next frequency.
    """
    inp = _input(equation, var, subst, at_infinity, dxdz, frequency)
    start, stop, step = omega
    grid = tuple(_parts(x)[0] for x in (start, stop, step))
    s = None if sum_l is None else (str(multipole), int(sum_l[0]), int(sum_l[1]))
    coupled = _coupled(couple, link, angular_index, angular_guess)
    return Scattering(_native.scatter(inp, _values(at), grid, s, int(wkb_order), coupled))


# --------------------------------------------------------------------------
# emit, record, check


def emit(
    text,
    lang="c",
    *,
    what="q",
    name=None,
    about=None,
    series=None,
    exponents=None,
    var=None,
    subst=None,
    at_infinity=False,
    dxdz=None,
    frequency=None,
) -> str:
    """C (``lang="c"``) or Rust (``"rust"``) source evaluating Q
    (``what="q"``), the Schrödinger potential (``"potential"``, needs
    ``dxdz=``), the recurrence coefficients (``"recurrence"``, needs
    ``about=``, the expansion point as classify prints it, with
    ``series=`` and ``exponents=`` as for :func:`record`) or all of them
    (``"all"``), each form verified exactly; ``name`` is the prefix of the
    emitted functions (default: from the file name)."""
    inp = _input(text, var, subst, at_infinity, dxdz, frequency)
    return _native.emit(inp, lang, what, name, about, series, exponents)


def record(source, *, path=None, about=None, series=None, exponents=None, subst=None, at_infinity=False, dxdz=None, frequency=None) -> str:
    """The derivation record of an equation file (text to commit beside a
    paper's code and re-check with :func:`check`).

    ``source``: a path (recorded as given) or the text itself with ``path=``
    naming its file. ``about``/``series``/``exponents`` record a recurrence
    about that point.
    """
    body, name = _source(source)
    if path is None:
        if name == "<input>":
            raise ValueError("record: a record names the file it was derived from: pass a path, or the text with path=")
        path = name.replace(_os.sep, "/")
    inp = (body, name, None, subst, bool(at_infinity), dxdz, frequency)
    return _native.record(inp, str(path), about, series, exponents)


class CheckResult:
    """The outcome of :func:`check`: ``holds``, ``changed`` (the keys that
    changed), ``diff`` (unified), ``note`` (a version note or None)."""

    def __init__(self, holds, changed, diff, note):
        self.holds, self.changed, self.diff, self.note = holds, list(changed), diff, note

    def __bool__(self):
        return self.holds

    def __str__(self):
        return "holds" if self.holds else f"changed: {', '.join(self.changed)}\n{self.diff}"

    def __repr__(self):
        return f"<canonode.CheckResult {'holds' if self.holds else 'changed: ' + ', '.join(self.changed)}>"


def check(record_path, *, source=None) -> CheckResult:
    """Re-derives a record (a ``.deriv`` file) from the source it names
    (relative to the record's directory), or from ``source`` (text) when
    given, and compares."""
    name = _os.fspath(record_path)
    with open(name, encoding="utf-8") as f:
        rtext = f.read()
    if source is None:
        rel = _native.record_source(rtext, name)
        sname = _os.path.join(_os.path.dirname(name), rel)
        with open(sname, encoding="utf-8") as f:
            stext = f.read()
    else:
        stext, sname = source, "<source>"
    return CheckResult(*_native.check(rtext, name, stext, sname))

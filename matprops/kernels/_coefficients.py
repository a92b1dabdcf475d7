"""Partial derivatives of a kernel with respect to its coefficients (forward mode).

The kernels' ``derivatives`` give partials with respect to their *inputs*, written out
by hand. Partials with respect to the *coefficients* are needed for every model whose
source states a coefficient uncertainty, and for every equation form a model file may
use; writing them out for each of the ~40 kernels would double the kernels' code. They
are computed here instead by forward-mode differentiation: a coefficient enters the
unchanged kernel as a :class:`Dual` (its value and its derivative with respect to each
chosen coefficient, a "tangent"), and every numpy operation it meets applies the
analytic derivative of that operation (the chain rule, one elementary function at a
time). The result is the analytic partial derivative, exact to rounding, not a
difference quotient; ``tests/behaviour/test_uncertainty.py`` checks each kernel against
central differences all the same.

Only numpy is supported (the kernels' numpy path): elementwise ufuncs with their
derivatives (:data:`_UNARY`, :data:`_BINARY`), comparisons on values, ``numpy.where``.
A kernel that turns a coefficient into a Python float (``float(c)``, ``math.log(c)``),
writes it into an array or calls a numpy function not listed here raises
:class:`NotDifferentiable` (a ``TypeError``), never a silently wrong zero: its
uncertainty is then propagated by Monte Carlo.

Tangents carry the directions on their *last* axis (``value.shape + (k,)``), so that
numpy's broadcasting of values of different shapes carries over unchanged.
"""

from __future__ import annotations

import numpy as np

__all__ = ["Dual", "NotDifferentiable", "seed", "split"]


class NotDifferentiable(TypeError):
    """A kernel used a coefficient in a way forward differentiation cannot follow."""


def _value(x):
    return x.value if isinstance(x, Dual) else x


def _tangent(x):
    return x.tangent if isinstance(x, Dual) else None


def _scale(factor, tangent):
    """``factor * tangent`` with the direction axis last; a zero tangent stays zero where
    the factor is infinite (a clamped branch through sqrt(0), log(0): its derivative is
    that of the clamp, 0)."""
    factor = np.expand_dims(factor, -1)
    with np.errstate(invalid="ignore", over="ignore"):
        product = np.multiply(factor, tangent)
    if not np.all(np.isfinite(factor)):
        product = np.where(tangent == 0.0, 0.0, product)
    return product


def _add(a, b):
    if a is None:
        return b
    if b is None:
        return a
    return a + b


class Dual:
    """A value with its partial derivatives with respect to ``k`` chosen coefficients.

    ``tangent`` has shape ``np.shape(value) + (k,)``. Arithmetic, numpy ufuncs and
    ``numpy.where`` carry both; anything else raises :class:`NotDifferentiable`.
    """

    __slots__ = ("tangent", "value")
    __array_priority__ = 1000.0  # numpy defers to our operators

    def __init__(self, value, tangent):
        self.value = value
        self.tangent = tangent

    # -------------------------------------------------------------- numpy protocols
    def __array__(self, dtype=None, copy=None):
        raise NotDifferentiable(
            "a coefficient under differentiation was converted to a plain array "
            "(its derivative would be lost)"
        )

    def __float__(self):
        raise NotDifferentiable(
            "a coefficient under differentiation was converted to a Python float "
            "(its derivative would be lost)"
        )

    __int__ = __index__ = __float__

    def __bool__(self):
        return bool(self.value)

    def __array_ufunc__(self, ufunc, method, *inputs, **kwargs):
        if method != "__call__" or kwargs.get("out") is not None:
            raise NotDifferentiable(f"numpy.{ufunc.__name__}.{method} (or out=) on a coefficient")
        kwargs.pop("out", None)
        if kwargs:
            raise NotDifferentiable(f"numpy.{ufunc.__name__} with options {sorted(kwargs)}")
        name = ufunc.__name__
        values = [_value(x) for x in inputs]
        if name in _PLAIN:  # comparisons, tests: on the values, no derivative
            return ufunc(*values)
        if len(inputs) == 1 and name in _UNARY:
            u = values[0]
            result = ufunc(u)
            du = _tangent(inputs[0])
            return Dual(result, None if du is None else _scale(_UNARY[name](u, result), du))
        if len(inputs) == 2 and name in _BINARY:
            u, v = values
            result = ufunc(u, v)
            du, dv = _tangent(inputs[0]), _tangent(inputs[1])
            partial_u, partial_v = _BINARY[name](u, v, result, du is not None, dv is not None)
            tangent = _add(
                None if du is None else _scale(partial_u, du),
                None if dv is None else _scale(partial_v, dv),
            )
            if tangent is not None:  # broadcast to the result (a constant's zero part)
                tangent = np.broadcast_to(tangent, np.shape(result) + tangent.shape[-1:])
            return Dual(result, tangent)
        raise NotDifferentiable(f"numpy.{name} has no derivative rule here")

    def __array_function__(self, func, types, args, kwargs):
        if func is np.where and len(args) == 3 and not kwargs:
            condition, a, b = args
            condition = _value(condition)
            value = np.where(condition, _value(a), _value(b))
            da, db = _tangent(a), _tangent(b)
            if da is None and db is None:
                return value
            k = (da if da is not None else db).shape[-1]
            shape = np.shape(value) + (k,)
            zero = np.zeros(())
            tangent = np.where(
                np.expand_dims(condition, -1),
                zero if da is None else da,
                zero if db is None else db,
            )
            return Dual(value, np.broadcast_to(tangent, shape))
        if func is np.broadcast_to and not kwargs:
            value = np.broadcast_to(_value(args[0]), args[1])
            tangent = _tangent(args[0])
            if tangent is None:
                return value
            return Dual(value, np.broadcast_to(tangent, np.shape(value) + tangent.shape[-1:]))
        if func in (np.shape, np.ndim, np.size):
            return func(_value(args[0]))
        raise NotDifferentiable(f"numpy.{func.__name__} on a coefficient")

    # -------------------------------------------------------------- sequences
    @property
    def shape(self):
        return np.shape(self.value)

    @property
    def ndim(self):
        return np.ndim(self.value)

    def __len__(self):
        return len(self.value)

    def __getitem__(self, index):
        return Dual(self.value[index], self.tangent[index])

    def __iter__(self):
        return (self[i] for i in range(len(self)))

    # -------------------------------------------------------------- operators
    def __add__(self, other):
        return np.add(self, other)

    def __radd__(self, other):
        return np.add(other, self)

    def __sub__(self, other):
        return np.subtract(self, other)

    def __rsub__(self, other):
        return np.subtract(other, self)

    def __mul__(self, other):
        return np.multiply(self, other)

    def __rmul__(self, other):
        return np.multiply(other, self)

    def __truediv__(self, other):
        return np.true_divide(self, other)

    def __rtruediv__(self, other):
        return np.true_divide(other, self)

    def __pow__(self, other):
        return np.power(self, other)

    def __rpow__(self, other):
        return np.power(other, self)

    def __neg__(self):
        return np.negative(self)

    def __pos__(self):
        return self

    def __abs__(self):
        return np.absolute(self)

    def __lt__(self, other):
        return np.less(self, other)

    def __le__(self, other):
        return np.less_equal(self, other)

    def __gt__(self, other):
        return np.greater(self, other)

    def __ge__(self, other):
        return np.greater_equal(self, other)

    def __eq__(self, other):  # a branch on equal coefficients cannot be followed
        raise NotDifferentiable("a coefficient under differentiation was compared for equality")

    __ne__ = __eq__

    __hash__ = None  # type: ignore[assignment]  # unhashable, as __eq__ refuses to compare

    def __repr__(self) -> str:
        return f"Dual({self.value!r}, tangent shape {np.shape(self.tangent)})"


# -------------------------------------------------------------------- derivative rules
def _inverse(x):
    with np.errstate(divide="ignore"):
        return np.divide(1.0, x)


# unary: (u, f(u)) -> df/du
_UNARY = {
    "negative": lambda u, r: -np.ones_like(u),
    "positive": lambda u, r: np.ones_like(u),
    "exp": lambda u, r: r,
    "expm1": lambda u, r: r + 1.0,
    "exp2": lambda u, r: r * np.log(2.0),
    "log": lambda u, r: _inverse(u),
    "log1p": lambda u, r: 1.0 / (1.0 + u),
    "log10": lambda u, r: 1.0 / (u * np.log(10.0)),
    "log2": lambda u, r: 1.0 / (u * np.log(2.0)),
    "sqrt": lambda u, r: _inverse(2.0 * r),
    "cbrt": lambda u, r: _inverse(3.0 * r * r),
    "square": lambda u, r: 2.0 * u,
    "reciprocal": lambda u, r: -r * r,
    "absolute": lambda u, r: np.sign(u),
    "tanh": lambda u, r: 1.0 - r * r,
    "sinh": lambda u, r: np.cosh(u),
    "cosh": lambda u, r: np.sinh(u),
    "sin": lambda u, r: np.cos(u),
    "cos": lambda u, r: -np.sin(u),
    "arctan": lambda u, r: 1.0 / (1.0 + u * u),
    "arcsinh": lambda u, r: 1.0 / np.sqrt(u * u + 1.0),
    "arcsin": lambda u, r: 1.0 / np.sqrt(1.0 - u * u),
    "floor": lambda u, r: np.zeros_like(u),
    "ceil": lambda u, r: np.zeros_like(u),
    "sign": lambda u, r: np.zeros_like(u),
}


def _power(u, v, r, want_u, want_v):
    with np.errstate(divide="ignore", invalid="ignore"):
        partial_u = v * np.power(u, v - 1.0) if want_u else None
        partial_v = r * np.log(u) if want_v else None
    return partial_u, partial_v


def _select(take_u):
    def rule(u, v, r, want_u, want_v):
        chosen = take_u(u, v)
        return (np.where(chosen, 1.0, 0.0), np.where(chosen, 0.0, 1.0))

    return rule


# binary: (u, v, f(u, v), whether each partial is needed) -> (df/du, df/dv)
_BINARY = {
    "add": lambda u, v, r, a, b: (1.0, 1.0),
    "subtract": lambda u, v, r, a, b: (1.0, -1.0),
    "multiply": lambda u, v, r, a, b: (v, u),
    "true_divide": lambda u, v, r, a, b: (1.0 / v, -r / v if b else None),
    "divide": lambda u, v, r, a, b: (1.0 / v, -r / v if b else None),
    "power": _power,
    "float_power": _power,
    "maximum": _select(lambda u, v: u >= v),
    "minimum": _select(lambda u, v: u <= v),
    "fmax": _select(lambda u, v: u >= v),
    "fmin": _select(lambda u, v: u <= v),
    "hypot": lambda u, v, r, a, b: (u / r, v / r),
    "arctan2": lambda u, v, r, a, b: (v / (u * u + v * v), -u / (u * u + v * v)),
    "logaddexp": lambda u, v, r, a, b: (np.exp(u - r), np.exp(v - r)),
    "copysign": lambda u, v, r, a, b: (np.sign(u) * np.sign(r), 0.0),
}

_PLAIN = frozenset(
    {
        "less",
        "less_equal",
        "greater",
        "greater_equal",
        "isfinite",
        "isnan",
        "isinf",
        "signbit",
        "logical_and",
        "logical_or",
        "logical_not",
    }
)


# -------------------------------------------------------------------- seeding
def seed(coefficients, directions):
    """Coefficient values with :class:`Dual` numbers in the chosen directions.

    Parameters
    ----------
    coefficients : mapping name -> kernel value (float or array)
    directions : sequence of (name, index) pairs: index None for a scalar
        coefficient, the element's index for an array one; direction ``j`` of the
        tangent is the derivative with respect to ``directions[j]``

    Returns
    -------
    dict name -> value, with a Dual in place of each differentiated coefficient.
    """
    k = len(directions)
    seeded = dict(coefficients)
    for j, (name, index) in enumerate(directions):
        current = seeded[name]
        if not isinstance(current, Dual):
            value = np.asarray(current, dtype=float) if index is not None else current
            shape = np.shape(value)
            current = Dual(value, np.zeros(shape + (k,)))
        if index is None:
            current.tangent[..., j] = 1.0
        else:
            current.tangent[index, j] = 1.0
        seeded[name] = current
    return seeded


def split(result, k: int):
    """``(value, tangent)`` of a kernel's result: a Dual, a plain value (its tangent
    zero: the chosen coefficients do not enter it), or a tuple of those."""
    if isinstance(result, tuple):
        parts = [split(part, k) for part in result]
        return tuple(p[0] for p in parts), tuple(p[1] for p in parts)
    if isinstance(result, Dual):
        tangent = result.tangent
        if tangent is None:
            tangent = np.zeros(np.shape(result.value) + (k,))
        return result.value, np.broadcast_to(tangent, np.shape(result.value) + (k,))
    return result, np.zeros(np.shape(result) + (k,))


def is_dual(value) -> bool:
    """Whether a coefficient is under differentiation (kernels then skip their caches
    and float conversions for it)."""
    return isinstance(value, Dual)


def number(value):
    """A coefficient as a Python float, or as it is when under differentiation."""
    return value if isinstance(value, Dual) else float(value)

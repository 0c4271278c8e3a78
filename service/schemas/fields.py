"""Strict marshmallow fields: real JSON numbers, 3-vectors, UTC epochs, bounded strings and lists.

marshmallow's own fields are lenient where a flight plan must not be: ``Float``
accepts the string ``"1.5"`` and ``true``, ``String`` accepts bytes. These fields
accept only the JSON type they name, hold their limits themselves (so the
export can turn the same limits into JSON Schema), and word every message the
same way: the field's name, what is wrong, what is allowed::

    thrust_n must be a finite number greater than 0; got -5
    thrust_n must be a finite number greater than 0; got a string ('22')
    epoch '2031-05-02T00:00:00' has no time zone: add Z for UTC or an offset such as +02:00

Epochs (``Epoch``): RFC 3339 profile of ISO 8601, ``YYYY-MM-DDThh:mm:ss[.fff...]``
followed by ``Z`` or ``+hh:mm``/``-hh:mm`` (upper-case ``T`` and ``Z``, seconds
required). An offset is converted to UTC. Digits beyond the millisecond are
ROUNDED to the nearest millisecond, halves up (to the later instant):
``00:00:00.0005Z`` -> ``00:00:00.001Z``, ``00:00:00.00049Z`` -> ``00:00:00.000Z``.
A leap second (``:60``) is refused, because epochs are held on a uniform UTC
scale (see ``service.dynamics.epochs``). The result, in UTC, must fall in the
years 1957 to 2200.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Mapping
from datetime import datetime, timedelta

import numpy as np
from marshmallow import ValidationError, fields, missing

EPOCH_MIN_YEAR = 1957  # Sputnik 1: nothing earlier is a plausible plan epoch
EPOCH_MAX_YEAR = 2200
EPOCH_FORMAT = "YYYY-MM-DDThh:mm:ss[.sss](Z|+hh:mm|-hh:mm)"
EPOCH_PATTERN = (
    r"^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}(\.[0-9]+)?(Z|[+-][0-9]{2}:[0-9]{2})$"
)
_EPOCH_RE = re.compile(
    r"([0-9]{4})-([0-9]{2})-([0-9]{2})T([0-9]{2}):([0-9]{2}):([0-9]{2})(?:\.([0-9]+))?"
    r"(Z|([+-])([0-9]{2}):([0-9]{2}))",
    re.ASCII,
)
_NAIVE_RE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}[T ][0-9]{2}:[0-9]{2}(:[0-9]{2}(\.[0-9]+)?)?")
# C0 controls, DEL and C1 controls (Unicode category Cc).
NO_CONTROL_PATTERN = "^[^\\u0000-\\u001f\\u007f-\\u009f]*$"
_CONTROL_RE = re.compile("[\u0000-\u001f\u007f-\u009f]")
_SHOW_CHARS = 40


def describe_value(value: object) -> str:
    """How a received value is named in a message: ``a string ('1.5')``, ``null``, ``-5``."""
    if value is None:
        return "null"
    if isinstance(value, bool):
        return f"a boolean ({json.dumps(value)})"
    if isinstance(value, str):
        shown = value if len(value) <= _SHOW_CHARS else value[:_SHOW_CHARS] + "..."
        return f"a string ({shown!r})"
    if isinstance(value, Mapping):
        return "an object"
    if isinstance(value, list | tuple):
        return f"an array of {len(value)} item{'' if len(value) == 1 else 's'}"
    if isinstance(value, float):
        return show_number(value)
    if isinstance(value, int):
        if abs(value) < 10**20:
            return str(value)
        try:
            return show_number(float(value))
        except OverflowError:
            return "an integer too large for a double"
    return f"a {type(value).__name__}"


def show_number(value: float) -> str:
    """A number as a message shows it: ``0`` for 0.0, ``7.6686``, ``NaN``, ``Infinity``."""
    if math.isnan(value):
        return "NaN"
    if math.isinf(value):
        return "Infinity" if value > 0 else "-Infinity"
    if value == int(value) and abs(value) < 1e15:
        return str(int(value))
    return repr(value)


class _Named:
    """Mixin: messages that start with the field's wire name and say what is allowed."""

    item_noun = "item"

    @property
    def label(self) -> str:
        parent = getattr(self, "parent", None)
        if isinstance(parent, fields.List) and isinstance(parent, _Named):
            return f"each {parent.item_noun} of {parent.label}"
        return getattr(self, "data_key", None) or getattr(self, "name", None) or "value"

    def describe(self) -> str:
        return "a value"

    def invalid(self, problem: str) -> ValidationError:
        return ValidationError(f"{self.label} {problem}")

    def wrong(self, value: object) -> ValidationError:
        return self.invalid(f"must be {self.describe()}; got {describe_value(value)}")

    def _validate_missing(self, value: object) -> None:
        if value is missing and self.required:  # type: ignore[attr-defined]
            raise self.invalid(f"is required: {self.describe()}")
        if value is None and not self.allow_none:  # type: ignore[attr-defined]
            default = self.load_default  # type: ignore[attr-defined]
            hint = ""
            if default is not missing and not callable(default):
                hint = f" (leave it out for the default {json.dumps(default)})"
            raise self.invalid(f"must be {self.describe()}, not null{hint}")


def _bound(value: float) -> str:
    return show_number(float(value))


class FiniteNumber(_Named, fields.Float):
    """A real JSON number (integers accepted, as floats): never a string, boolean, NaN or infinity.

    Limits: ``gt``/``ge`` lower bound (exclusive/inclusive), ``lt``/``le`` upper bound.
    """

    def __init__(
        self,
        *,
        gt: float | None = None,
        ge: float | None = None,
        lt: float | None = None,
        le: float | None = None,
        **kwargs,
    ) -> None:
        super().__init__(allow_nan=False, **kwargs)
        self.gt, self.ge, self.lt, self.le = gt, ge, lt, le

    def describe(self) -> str:
        limits = []
        if self.ge is not None and self.le is not None:
            limits.append(f"from {_bound(self.ge)} to {_bound(self.le)} inclusive")
        else:
            if self.gt is not None:
                limits.append(f"greater than {_bound(self.gt)}")
            if self.ge is not None:
                limits.append(f"at least {_bound(self.ge)}")
            if self.lt is not None:
                limits.append(f"less than {_bound(self.lt)}")
            if self.le is not None:
                limits.append(f"at most {_bound(self.le)}")
        return " ".join(["a finite number", " and ".join(limits)]).strip()

    def _deserialize(self, value, attr, data, **kwargs) -> float:
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise self.wrong(value)
        try:
            number = float(value)
        except OverflowError:
            raise self.wrong(value) from None
        if not math.isfinite(number):
            raise self.wrong(number)
        if (
            (self.gt is not None and not number > self.gt)
            or (self.ge is not None and not number >= self.ge)
            or (self.lt is not None and not number < self.lt)
            or (self.le is not None and not number <= self.le)
        ):
            raise self.wrong(number)
        return number


class StrictString(_Named, fields.String):
    """A JSON string only, with optional length limits, a fixed set of choices, no control chars."""

    def __init__(
        self,
        *,
        min_length: int | None = None,
        max_length: int | None = None,
        choices: tuple[str, ...] | None = None,
        allow_blank: bool = True,
        **kwargs,
    ) -> None:
        super().__init__(**kwargs)
        self.min_length, self.max_length = min_length, max_length
        self.choices, self.allow_blank = choices, allow_blank

    def describe(self) -> str:
        if self.choices:
            return "one of " + ", ".join(repr(choice) for choice in self.choices)
        size = ""
        if self.min_length is not None and self.max_length is not None:
            size = f" of {self.min_length} to {self.max_length} characters"
        elif self.max_length is not None:
            size = f" of at most {self.max_length} characters"
        elif self.min_length is not None:
            size = f" of at least {self.min_length} characters"
        return f"a string{size} without control characters"

    def _deserialize(self, value, attr, data, **kwargs) -> str:
        if not isinstance(value, str):
            raise self.wrong(value)
        if self.choices:
            if value not in self.choices:
                raise self.wrong(value)
            return value
        length = len(value)
        if (self.min_length is not None and length < self.min_length) or (
            self.max_length is not None and length > self.max_length
        ):
            raise self.invalid(f"must be {self.describe()}; got {length} characters")
        control = _CONTROL_RE.search(value)
        if control:
            code = f"U+{ord(control.group()):04X}"
            raise self.invalid(
                f"must be {self.describe()}; found {code} at position {control.start()}"
            )
        if not self.allow_blank and not value.strip():
            raise self.invalid(f"must be {self.describe()} and not only white space")
        return value


class Vector3(_Named, fields.List):
    """Exactly three finite JSON numbers, returned as a tuple of floats."""

    item_noun = "component"

    def __init__(self, *, nonzero: str | None = None, **kwargs) -> None:
        """``nonzero``: if given, the zero vector is refused with this explanation."""
        super().__init__(FiniteNumber(), **kwargs)
        self.nonzero = nonzero

    def describe(self) -> str:
        extra = ", not all zero" if self.nonzero else ""
        return f"a list of exactly 3 finite numbers{extra}"

    def _deserialize(self, value, attr, data, **kwargs) -> tuple[float, float, float]:
        if not isinstance(value, list | tuple) or len(value) != 3:
            raise self.wrong(value)
        result = tuple(super()._deserialize(value, attr, data, **kwargs))
        if self.nonzero and not any(result):
            raise self.invalid(f"is the zero vector: {self.nonzero}")
        return result  # type: ignore[return-value]


class BoundedList(_Named, fields.List):
    """A JSON array with a size limit checked before any item is read."""

    def __init__(
        self,
        inner: fields.Field,
        *,
        min_items: int = 0,
        max_items: int | None = None,
        noun: str = "items",
        **kwargs,
    ) -> None:
        super().__init__(inner, **kwargs)
        self.min_items, self.max_items, self.noun = min_items, max_items, noun

    def describe(self) -> str:
        if self.max_items is None:
            return f"a list of at least {self.min_items} {self.noun}"
        if self.min_items:
            return f"a list of {self.min_items} to {self.max_items} {self.noun}"
        return f"a list of at most {self.max_items} {self.noun}"

    def _deserialize(self, value, attr, data, **kwargs) -> list:
        if not isinstance(value, list | tuple):
            raise self.wrong(value)
        if len(value) < self.min_items or (
            self.max_items is not None and len(value) > self.max_items
        ):
            raise self.invalid(f"must be {self.describe()}; got {len(value)}")
        return super()._deserialize(value, attr, data, **kwargs)


class StrictNested(_Named, fields.Nested):
    """A nested JSON object; anything else is refused with a message naming the field."""

    def describe(self) -> str:
        return "a JSON object"

    def _deserialize(self, value, attr, data, partial=None, **kwargs):
        if not isinstance(value, Mapping):
            raise self.wrong(value)
        return super()._deserialize(value, attr, data, partial=partial, **kwargs)


class RuleValues(_Named, fields.Field):
    """``rules``: check id -> {parameter name -> finite number | boolean | string}.

    Names are the engine's to check; this field checks the shape and that numbers are
    finite. Numbers are passed on as received (an integer stays an integer).
    """

    def describe(self) -> str:
        return "an object mapping check ids to objects of parameter values"

    def _deserialize(self, value, attr, data, **kwargs) -> dict[str, dict[str, object]]:
        if not isinstance(value, Mapping):
            raise self.wrong(value)
        errors: dict[str, object] = {}
        result: dict[str, dict[str, object]] = {}
        for check_id, params in value.items():
            if not isinstance(params, Mapping):
                errors[check_id] = [
                    f"rule {check_id!r} must be an object mapping parameter names to values; "
                    f"got {describe_value(params)}"
                ]
                continue
            bad = {
                name: [
                    f"parameter {name!r} of rule {check_id!r} must be a finite number, a "
                    f"boolean or a string; got {describe_value(param)}"
                ]
                for name, param in params.items()
                if not _is_rule_value(param)
            }
            if bad:
                errors[check_id] = bad
            else:
                result[check_id] = dict(params)
        if errors:
            raise ValidationError(errors)
        return result


def _is_rule_value(value: object) -> bool:
    if isinstance(value, bool | str):
        return True
    if isinstance(value, int | float):
        try:
            return math.isfinite(float(value))
        except OverflowError:
            return False
    return False


class Epoch(_Named, fields.Field):
    """An ISO 8601 date-time with ``Z`` or an offset -> ``numpy.datetime64`` (ms, UTC).

    The accepted form and the rounding rule are in the module docstring.
    """

    def describe(self) -> str:
        return (
            f"an ISO 8601 date-time with a zone, {EPOCH_FORMAT}, in the years "
            f"{EPOCH_MIN_YEAR} to {EPOCH_MAX_YEAR} UTC"
        )

    def _deserialize(self, value, attr, data, **kwargs) -> np.datetime64:
        if not isinstance(value, str):
            raise self.wrong(value)
        match = _EPOCH_RE.fullmatch(value)
        shown = describe_value(value)[len("a string (") : -1]
        if match is None:
            if _NAIVE_RE.fullmatch(value):
                raise self.invalid(
                    f"{shown} has no time zone: add Z for UTC or an offset such as +02:00 "
                    f"({EPOCH_FORMAT})"
                )
            raise self.wrong(value)
        year, month, day, hour, minute, second = (int(match.group(k)) for k in range(1, 7))
        fraction, zone = match.group(7) or "", match.group(8)
        if second == 60:
            raise self.invalid(
                f"{shown} is a leap second, which cannot be represented (UTC is held as a "
                "uniform scale); give a time with seconds 00 to 59"
            )
        try:
            local = datetime(year, month, day, hour, minute, second)
        except ValueError as error:
            raise self.invalid(f"{shown} is not a real date-time: {error}") from None
        offset = timedelta(0)
        if zone != "Z":
            hours, minutes = int(match.group(10)), int(match.group(11))
            if hours > 23 or minutes > 59:
                raise self.invalid(f"{shown} has an offset beyond 23:59")
            offset = timedelta(hours=hours, minutes=minutes)
            if match.group(9) == "-":
                offset = -offset
        milliseconds = int(fraction[:3].ljust(3, "0"))
        if len(fraction) > 3 and fraction[3] >= "5":
            milliseconds += 1  # round half up to the millisecond (module docstring)
        try:
            utc = local - offset + timedelta(milliseconds=milliseconds)
        except OverflowError:
            utc = None
        if utc is None or not EPOCH_MIN_YEAR <= utc.year <= EPOCH_MAX_YEAR:
            raise self.invalid(
                f"{shown} lies outside the plausible years {EPOCH_MIN_YEAR} to "
                f"{EPOCH_MAX_YEAR} (UTC)"
            )
        return np.datetime64(utc.replace(tzinfo=None).isoformat(timespec="milliseconds"), "ms")

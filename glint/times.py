"""Parsing of user times: the one way glint turns times into UTC instants.

Times are timezone-aware ``datetime`` objects, pandas timestamps, numpy
``datetime64`` values (taken as UTC) or, from scene files and the command
line, ISO 8601 text with ``Z`` or an offset. A naive time (no time zone) is
an error, never silently taken as UTC or local time.
"""

from __future__ import annotations

import datetime as _dt
from typing import Any

import numpy as np

from glint.errors import InputError

__all__ = ["TIME_STYLES", "format_time", "parse_time", "to_utc_datetime64"]


_NAIVE_MSG = (
    "naive datetime {value!r} is not allowed: times must carry a time zone. "
    "Give tzinfo (for example tzinfo=datetime.timezone.utc) or pass a "
    "numpy.datetime64, which glint takes as UTC"
)


def _is_pandas(obj: Any) -> bool:
    return type(obj).__module__.split(".")[0] == "pandas"


def _pandas_to_datetime64(obj: Any) -> np.ndarray:
    tz = getattr(obj, "tz", None)
    if tz is None and hasattr(obj, "dt"):  # Series
        tz = getattr(obj.dt, "tz", None)
        if tz is not None:
            obj = obj.dt.tz_convert("UTC").dt.tz_localize(None)
            return _finest(np.asarray(obj.to_numpy()))
    if not hasattr(obj, "tz_convert"):
        raise InputError(
            f"cannot read time {obj!r}: expected a pandas Timestamp, "
            "DatetimeIndex or datetime Series"
        )
    if tz is None:
        raise InputError(
            f"naive pandas time {obj!r} is not allowed: times must carry a "
            "time zone. Localise it (for example .tz_localize('UTC'), or "
            ".dt.tz_localize('UTC') for a Series) or pass "
            "a numpy.datetime64, which glint takes as UTC"
        )
    utc = obj.tz_convert("UTC").tz_localize(None)
    return _finest(np.asarray(utc.to_numpy()))


def _datetime_to_datetime64(value: _dt.datetime) -> np.datetime64:
    if value.tzinfo is None or value.tzinfo.utcoffset(value) is None:
        raise InputError(_NAIVE_MSG.format(value=value))
    utc = value.astimezone(_dt.timezone.utc).replace(tzinfo=None)
    return np.datetime64(utc, "us")


def _finest(arr: np.ndarray) -> np.ndarray:
    """Return datetime64[ns] if every instant fits, else datetime64[us]."""
    unit = np.datetime_data(arr.dtype)[0]
    if unit == "ns":
        return arr
    as_us = arr.astype("datetime64[us]")
    v = as_us.astype(np.int64)
    ok = v != np.iinfo(np.int64).min  # NaT
    limit = np.iinfo(np.int64).max // 1000
    if np.all(np.abs(v[ok]) < limit):
        return arr.astype("datetime64[ns]")
    return as_us


def parse_time(value: Any, key: str | None = "time") -> np.datetime64:
    """Parse one user time into a UTC ``datetime64[ns]``.

    Parameters
    ----------
    value : datetime.datetime, str or numpy.datetime64
        A timezone-aware datetime (as TOML offset date-times load), an ISO
        8601 text with ``Z`` or an offset such as ``+01:00``, or a
        ``numpy.datetime64`` (taken as UTC).
    key : str or None
        Name put in front of error messages (``scene.time``); None for none.

    Returns
    -------
    numpy.datetime64
        The time in UTC with nanosecond precision.

    Raises
    ------
    InputError
        If the value has no time zone, no time of day, cannot be read, or
        lies outside 1678-01-01 .. 2261-12-31 (UTC), the whole years that
        ``datetime64[ns]`` holds.

    Examples
    --------
    >>> parse_time("2026-06-14T09:42:00+01:00")
    np.datetime64('2026-06-14T08:42:00.000000000')
    """
    text = value
    pre = f"{key}: " if key else ""
    if isinstance(value, str):
        s = value.strip()
        try:
            value = _dt.datetime.fromisoformat(s)
        except ValueError:
            raise InputError(
                f"{pre}{text!r} is not an ISO 8601 date-time; write e.g. "
                "2026-06-14T09:42:00Z or 2026-06-14T10:42:00+01:00") from None
        if "T" not in s.upper() and " " not in s:
            raise InputError(f"{pre}{text!r} has no time of day; write e.g. {s}T09:42:00Z")
    if isinstance(value, _dt.datetime):
        if value.tzinfo is None or value.tzinfo.utcoffset(value) is None:
            shown = value.isoformat() if not isinstance(text, str) else text
            raise InputError(f"{pre}{shown} has no time zone; add Z or an offset like +01:00")
    elif isinstance(value, _dt.date):
        raise InputError(f"{pre}{value.isoformat()} has no time of day and no time zone; "
                         f"write e.g. {value.isoformat()}T09:42:00Z")
    elif isinstance(value, _dt.time):
        raise InputError(f"{pre}{value.isoformat()} has no date and no time zone; "
                         "write e.g. 2026-06-14T09:42:00Z")
    elif not isinstance(value, np.datetime64):
        raise InputError(f"{pre}expected a date-time with a time zone, got "
                         f"{type(value).__name__} {value!r}")
    try:
        out = np.asarray(to_utc_datetime64(value))
    except InputError as exc:
        raise InputError(f"{pre}{exc}") from None
    if out.size != 1 or np.isnat(out.reshape(-1)[0]):
        raise InputError(f"{pre}{text!r} is not a single valid time")
    one = out.reshape(-1)[0].astype("datetime64[us]")
    # Whole years that datetime64[ns], in which the pipeline stores times,
    # can hold (it ends at 1677-09-21 and 2262-04-11).
    if not np.datetime64("1678-01-01", "us") <= one < np.datetime64("2262-01-01", "us"):
        if isinstance(text, str):
            shown = repr(text)
        elif isinstance(text, _dt.datetime):
            shown = text.isoformat()
        else:
            shown = f"{np.datetime_as_string(one, unit='s')}Z"
        raise InputError(
            f"{pre}{shown} is outside the supported time range: give an instant "
            "from 1678-01-01T00:00:00Z to 2261-12-31T23:59:59Z (times are stored as "
            "numpy datetime64[ns])"
        )
    return one.astype("datetime64[ns]")


def to_utc_datetime64(time: Any) -> np.ndarray:
    """Convert user times to a numpy array of UTC ``datetime64``.

    Parameters
    ----------
    time : datetime64, datetime, pandas Timestamp/DatetimeIndex, or array-like
        A ``numpy.datetime64`` (scalar or array, taken as UTC), a
        timezone-aware ``datetime.datetime`` (any zone), a timezone-aware
        pandas ``Timestamp``/``DatetimeIndex``/``Series``, a list or
        object array of those, or any array (xarray, say) of
        ``datetime64``. ``NaT`` is kept.

    Returns
    -------
    ndarray of datetime64[ns]
        UTC instants, shaped like the input. Instants outside
        1678-2262, which nanoseconds cannot hold, come back as
        ``datetime64[us]`` (never wrapped into other dates).

    Raises
    ------
    InputError
        For a naive ``datetime`` or naive pandas time (no time zone), a
        ``datetime.date`` without a time, strings, numbers, anything else
        that is not a time, or an instant that not even ``datetime64[us]``
        can hold.

    Notes
    -----
    This is the one parser of user times in glint. pandas is never imported
    here: its objects are recognised by their module name.

    Examples
    --------
    >>> import datetime
    >>> t = datetime.datetime(2024, 6, 1, 14, 0,
    ...                       tzinfo=datetime.timezone(datetime.timedelta(hours=2)))
    >>> to_utc_datetime64(t)
    array('2024-06-01T12:00:00.000000000', dtype='datetime64[ns]')
    """
    if _is_pandas(time):
        return _pandas_to_datetime64(time)
    if isinstance(time, _dt.datetime):
        return _finest(np.asarray(_datetime_to_datetime64(time)))
    if isinstance(time, np.datetime64) or (
        isinstance(time, np.ndarray) and time.dtype.kind == "M"
    ):
        arr = np.asarray(time)
        unit = np.datetime_data(arr.dtype)[0]
        if unit == "generic":  # only NaT has no unit
            return arr.astype("datetime64[ns]")
        if unit not in ("ns", "us", "ps", "fs", "as"):
            # Coarse units (s, D, Y, ...) reach further than microseconds;
            # numpy would wrap such instants into other dates.
            back = arr.astype("datetime64[us]").astype(arr.dtype)
            wrapped = ~np.isnat(arr) & (back != arr)
            if np.any(wrapped):
                raise InputError(
                    f"time {arr[wrapped].reshape(-1)[0]!r} is too far from 1970 to be "
                    "held as datetime64[us]; give instants within about 290,000 years "
                    "of 1970 (and within 1678-2261 for maps and scene files)"
                )
        return _finest(arr)
    if getattr(getattr(time, "dtype", None), "kind", None) == "M":
        # Other array types holding datetime64 (an xarray.DataArray, say).
        return to_utc_datetime64(np.asarray(time))
    if isinstance(time, (list, tuple, np.ndarray)):
        arr = np.asarray(time, dtype=object) if not isinstance(time, np.ndarray) else time
        if arr.dtype.kind == "M":
            return _finest(arr)
        if arr.dtype != object:
            raise InputError(
                f"time must be datetime64, timezone-aware datetime or pandas "
                f"timestamps; got an array of dtype {arr.dtype} ({time!r})"
            )
        flat = arr.ravel()
        out = np.empty(flat.shape, dtype="datetime64[us]")
        for i, item in enumerate(flat):
            out[i] = to_utc_datetime64(item).astype("datetime64[us]")
        return _finest(out.reshape(arr.shape))
    if isinstance(time, _dt.date):
        raise InputError(
            f"time {time!r} is a date without a time of day: give a "
            "timezone-aware datetime.datetime or a numpy.datetime64"
        )
    raise InputError(
        f"time must be numpy.datetime64, a timezone-aware datetime.datetime or "
        f"a pandas Timestamp/DatetimeIndex (or an array of those); got {time!r}"
    )


#: Styles of :func:`format_time`.
TIME_STYLES: tuple[str, ...] = ("iso", "text", "stamp")


def format_time(time: Any, style: str = "iso") -> str:
    """One UTC instant as text, to the second: the one time formatter of glint.

    Parameters
    ----------
    time : datetime-like
        A numpy ``datetime64`` (UTC), a timezone-aware ``datetime`` or a
        pandas ``Timestamp``; naive ``datetime`` objects are refused as in
        :func:`to_utc_datetime64`.
    style : {"iso", "text", "stamp"}
        ``"iso"``: ISO 8601 with a ``Z`` (``2026-06-14T10:30:00Z``), for
        metadata and tables; ``"text"``: for people (``2026-06-14 10:30:00
        UTC``); ``"stamp"``: compact, for file names (``20260614T103000Z``).

    Returns
    -------
    str

    Raises
    ------
    InputError
        If ``style`` is not one of :data:`TIME_STYLES`.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.datetime64("2026-06-14T10:30:00.4")
    >>> format_time(t), format_time(t, "text"), format_time(t, "stamp")
    ('2026-06-14T10:30:00Z', '2026-06-14 10:30:00 UTC', '20260614T103000Z')
    """
    if style not in TIME_STYLES:
        raise InputError(f"time style {style!r} is not one of {', '.join(TIME_STYLES)}")
    t = np.asarray(to_utc_datetime64(time)).reshape(-1)[0]
    iso = str(np.datetime_as_string(t.astype("datetime64[s]"), unit="s"))
    if style == "text":
        return iso.replace("T", " ") + " UTC"
    if style == "stamp":
        return iso.replace("-", "").replace(":", "") + "Z"
    return iso + "Z"

"""JSON reports: plain dictionaries of numbers, text and lists written as
indented UTF-8 JSON (numpy scalars and arrays, datetimes and paths
converted; NaN written as null so that every JSON reader accepts the file)."""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np

from glint.times import format_time

__all__ = ["write_json", "to_json_value"]


def to_json_value(value: Any) -> Any:
    """``value`` as plain JSON types (NaN and infinity become None)."""
    if isinstance(value, Mapping):
        return {str(k): to_json_value(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [to_json_value(v) for v in value]
    if isinstance(value, np.ndarray):
        return [to_json_value(v) for v in value.tolist()]
    if isinstance(value, np.datetime64):
        return format_time(value)
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, (np.integer, int)):
        return int(value)
    if isinstance(value, (np.floating, float)):
        return float(value) if math.isfinite(float(value)) else None
    if isinstance(value, Path):
        return str(value)
    return value


def write_json(path: str | Path, data: Mapping[str, Any]) -> Path:
    """Write ``data`` as indented JSON to ``path`` (a temporary path of an
    output set); returns the path."""
    p = Path(path)
    p.write_text(json.dumps(to_json_value(data), indent=2, ensure_ascii=False) + "\n",
                 encoding="utf-8")
    return p

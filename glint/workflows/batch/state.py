"""Per-scene state of a batch: what was run, with which inputs, and how it went.

Each scene's folder holds a small JSON state file, :data:`STATE_FILE`,
written atomically (through :class:`glint.io.outputset.OutputSet`) after
the scene's output sets are in place. A scene is *done* when its state says
so, every file it lists exists, and its inputs are unchanged: the same
resolved scene (the scene file with the manifest's values applied), the
same glint version and the same input files (content hash for files up to
:data:`HASH_CONTENT_BELOW` bytes, size and modification time above).
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

from glint._version import __version__
from glint.io.outputset import OutputSet

__all__ = [
    "STATE_FILE",
    "HASH_CONTENT_BELOW",
    "Inputs",
    "scene_inputs",
    "read_state",
    "write_state",
    "Decision",
    "decide",
]

#: Name of the state file in each scene's folder.
STATE_FILE = "glint-batch-state.json"
#: Input files up to this size [bytes] are hashed by content; larger ones by
#: size and modification time.
HASH_CONTENT_BELOW = 64 * 1024 * 1024
_STATE_VERSION = 1


def _jsonable(value: Any) -> Any:
    """TOML values (dates, times) as JSON, keys sorted for a stable hash."""
    if isinstance(value, Mapping):
        return {str(k): _jsonable(v) for k, v in sorted(value.items(), key=lambda kv: str(kv[0]))}
    if isinstance(value, (list, tuple)):
        return [_jsonable(v) for v in value]
    if isinstance(value, (_dt.datetime, _dt.date, _dt.time)):
        return value.isoformat()
    if isinstance(value, float) and value != value:
        return "nan"
    return value


def _file_fingerprint(path: Path) -> str:
    st = path.stat()
    if st.st_size <= HASH_CONTENT_BELOW:
        h = hashlib.sha256()
        with open(path, "rb") as f:
            for chunk in iter(lambda: f.read(1 << 20), b""):
                h.update(chunk)
        return f"sha256:{h.hexdigest()}"
    return f"size:{st.st_size} mtime_ns:{st.st_mtime_ns}"


def _referenced_files(data: Any, base_dir: Path) -> dict[str, str]:
    """Every text value of the scene that names an existing file (angle
    rasters, grid rasters, position tables), relative paths against the
    scene file's folder."""
    found: dict[str, str] = {}

    def walk(v: Any) -> None:
        if isinstance(v, Mapping):
            for x in v.values():
                walk(x)
        elif isinstance(v, list):
            for x in v:
                walk(x)
        elif isinstance(v, str) and v and len(v) < 4096 and "\n" not in v:
            p = Path(v).expanduser()
            p = p if p.is_absolute() else base_dir / p
            try:
                if p.is_file():
                    found[str(p.resolve())] = _file_fingerprint(p)
            except OSError:
                pass

    walk(data)
    return dict(sorted(found.items()))


@dataclass(frozen=True)
class Inputs:
    """What a scene's outputs depend on, and its hash."""

    scene: dict[str, Any]
    files: dict[str, str]
    version: str

    @property
    def digest(self) -> str:
        text = json.dumps({"scene": self.scene, "files": self.files, "version": self.version},
                          sort_keys=True, separators=(",", ":"))
        return hashlib.sha256(text.encode()).hexdigest()

    def to_json(self) -> dict[str, Any]:
        return {"scene": self.scene, "files": self.files, "glint_version": self.version,
                "digest": self.digest}


def scene_inputs(data: Mapping[str, Any], base_dir: Path) -> Inputs:
    """The inputs of a resolved scene (scene-file structure with the
    manifest's values applied; relative paths against ``base_dir``)."""
    return Inputs(scene=_jsonable(data), files=_referenced_files(data, base_dir), version=__version__)


def read_state(folder: Path) -> dict[str, Any] | None:
    """The state of a scene's folder, or None (none yet, or unreadable:
    a state that cannot be read is treated as absent and the scene redone)."""
    try:
        state = json.loads((folder / STATE_FILE).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return state if isinstance(state, dict) and state.get("state_version") == _STATE_VERSION else None


def write_state(folder: Path, state: Mapping[str, Any]) -> Path:
    """Write a scene's state file atomically (whole or not at all); the
    folder is created (with its parents) when missing.

    The file is renamed into place without an ``fsync`` of its own: after a
    power loss it can be empty or missing, which :func:`read_state` takes as
    "no state" and the scene is redone, so durability would only cost every
    scene a disk flush."""
    body = json.dumps({"state_version": _STATE_VERSION, **state}, indent=1, default=str,
                      allow_nan=False)
    with OutputSet(folder, {"state": STATE_FILE}, overwrite=True, parents=True) as out:
        tmp = out.temp("state")
        with open(tmp, "w", encoding="utf-8") as f:
            f.write(body + "\n")
    return folder / STATE_FILE


Status = Literal["new", "changed", "failed", "incomplete", "forced", "done"]


@dataclass(frozen=True)
class Decision:
    """Whether a scene runs, and why."""

    status: Status
    reason: str

    @property
    def run(self) -> bool:
        return self.status != "done"


def _diff(old: Any, new: Any, prefix: str = "") -> list[str]:
    if isinstance(old, dict) and isinstance(new, dict):
        out: list[str] = []
        for k in sorted(set(old) | set(new)):
            path = f"{prefix}.{k}" if prefix else str(k)
            if k not in old:
                out.append(f"{path} added ({new[k]!r})")
            elif k not in new:
                out.append(f"{path} removed (was {old[k]!r})")
            else:
                out.extend(_diff(old[k], new[k], path))
        return out
    return [] if old == new else [f"{prefix} {old!r} -> {new!r}"]


def decide(folder: Path, inputs: Inputs, *, force: bool = False) -> Decision:
    """Compare a scene's folder with its inputs: run it (new, changed,
    failed before, outputs missing, forced) or skip it (done)."""
    state = read_state(folder)
    if state is None:
        return Decision("new", "no finished run recorded")
    old = state.get("inputs", {}) if isinstance(state.get("inputs"), dict) else {}
    if force:
        return Decision("forced", "--force")
    if state.get("status") != "done":
        err = state.get("error") or "unknown error"
        return Decision("failed", f"failed last time: {err}")
    if old.get("digest") != inputs.digest:
        why: list[str] = []
        if old.get("glint_version") != inputs.version:
            why.append(f"glint version {old.get('glint_version')!r} -> {inputs.version!r}")
        why += _diff(old.get("scene", {}), inputs.scene)
        files_old, files_new = old.get("files", {}), inputs.files
        why += [f"input file {p} changed" for p in sorted(set(files_old) | set(files_new))
                if files_old.get(p) != files_new.get(p)]
        return Decision("changed", "; ".join(why[:5]) + (" ..." if len(why) > 5 else "")
                        if why else "inputs changed")
    missing = [f for f in state.get("files", []) if not (folder / f).is_file()]
    if missing:
        return Decision("incomplete", f"output(s) missing: {', '.join(missing[:3])}"
                        + (" ..." if len(missing) > 3 else ""))
    return Decision("done", "unchanged since the last run")

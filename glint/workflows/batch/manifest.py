"""Batch manifests: which scenes a batch computes, checked before any work.

A manifest is a TOML file of our own design with three ways of naming
scenes, which may be combined:

``scenes``
    A list of scene files (paths relative to the manifest), each a string or
    a table ``{file = "...", name = "...", set = {"surface.wind_speed" = 9.0}}``.
``[template]`` (or ``[[template]]`` for several)
    One scene file and a table of rows, each row a name and values for key
    paths of the scene file (``scene.time``, ``surface.wind_speed``,
    ``grid.bounds``, ...): ``rows = "rows.csv"`` (a CSV file with a ``name``
    column) or ``[[template.rows]]`` tables.
``[tiles]`` (or ``[[tiles]]``)
    A tile grid over an area for a list or range of times (see
    :mod:`glint.workflows.batch.tiles`).

Every entry becomes one :class:`SceneEntry`; :meth:`Manifest.resolve`
builds and validates every scene and reports every problem at once, each
with its position in the manifest (``scenes[2]``, ``rows.csv line 5``,
``tiles[0] tile c003_r001 2026-06-14T10:30:00Z``).
"""

from __future__ import annotations

import copy
import csv
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from glint.errors import GlintError, InputError, InputFileError, SceneError
from glint.scene import Scene, scene_from_dict

__all__ = [
    "ManifestError",
    "SceneEntry",
    "ResolvedScene",
    "Manifest",
    "load_manifest",
    "safe_name",
    "apply_key_paths",
    "MAX_NAME_LENGTH",
]

#: Longest scene name (it becomes a folder name).
MAX_NAME_LENGTH = 120

#: File names of the output directory that no scene folder may take.
_RESERVED = ("batch-summary.csv", "batch-summary.json")
_TOP_KEYS = ("description", "scenes", "template", "tiles")
_ENTRY_KEYS = ("file", "name", "set")
_TEMPLATE_KEYS = ("scene", "rows", "name")
#: Keys of a grid table that choose its form; a row giving one form drops
#: the template's other forms.
_GRID_FORMS = (("west", "south", "east", "north"), ("bounds", "crs"), ("raster",))


class ManifestError(InputError):
    """A batch manifest has one or more problems.

    Parameters
    ----------
    problems : list of str
        One line per problem, each starting with its position in the manifest.
    source : str, optional
        The manifest file, named in the message.
    """

    def __init__(self, problems: list[str] | str, source: str | None = None):
        if isinstance(problems, str):
            problems = [problems]
        self.problems = list(problems)
        self.source = source
        head = f"invalid batch manifest{f' {source!s}' if source else ''}"
        if len(self.problems) == 1:
            msg = f"{head}: {self.problems[0]}"
        else:
            shown = self.problems[:50]
            more = len(self.problems) - len(shown)
            msg = f"{head} ({len(self.problems)} problems):\n" + "\n".join(f"  - {p}" for p in shown)
            if more:
                msg += f"\n  ... and {more} more"
        super().__init__(msg)


@dataclass(frozen=True)
class SceneEntry:
    """One scene of a batch before it is built.

    Attributes
    ----------
    name : str
        Name of the scene's output folder (see :func:`safe_name`).
    file : pathlib.Path
        The scene (or template) file, absolute.
    values : mapping
        Key path (``"surface.wind_speed"``) -> value replacing the file's.
    where : str
        Position of the entry in the manifest, for messages.
    grid : mapping or None
        A whole ``[grid]`` table replacing the file's (tile grids).
    """

    name: str
    file: Path
    values: Mapping[str, Any] = field(default_factory=dict)
    where: str = ""
    grid: Mapping[str, Any] | None = None
    label: str = ""


@dataclass(frozen=True)
class ResolvedScene:
    """A validated scene of a batch: its entry, the scene-file structure with
    the entry's values applied (what is hashed), and the built scene."""

    entry: SceneEntry
    data: dict[str, Any]
    scene: Scene

    @property
    def name(self) -> str:
        return self.entry.name

    @property
    def base_dir(self) -> Path:
        return self.entry.file.parent


def safe_name(name: Any) -> str:
    """The folder name of a scene: runs of characters other than ASCII
    letters, digits, ``.``, ``-`` and ``_`` become ``_``.

    Raises
    ------
    InputError
        If the name is empty, would leave the output directory (``..``, a
        path separator, an absolute path, a leading ``.`` or ``~``) or is
        longer than :data:`MAX_NAME_LENGTH`.

    Examples
    --------
    >>> safe_name("Bay 09:00 (high tide)")
    'Bay_09_00_high_tide'
    """
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"scene name {name!r} must be a non-empty text")
    text = name.strip()
    if "/" in text or "\\" in text or text.startswith((".", "~")):
        raise InputError(f"scene name {name!r} would leave the output directory; use a plain "
                         "name without '/', '\\', a leading '.' or '~'")
    safe = re.sub(r"[^A-Za-z0-9._-]+", "_", text).strip("_")
    if not safe or safe.startswith("."):
        raise InputError(f"scene name {name!r} has no letters or digits to name a folder with")
    if safe.lower() in _RESERVED:
        raise InputError(f"scene name {name!r} is the name of a batch summary file; choose another")
    if len(safe) > MAX_NAME_LENGTH:
        raise InputError(f"scene name {name!r} is {len(safe)} characters long; at most "
                         f"{MAX_NAME_LENGTH} are allowed")
    return safe


def apply_key_paths(data: Mapping[str, Any], values: Mapping[str, Any],
                    grid: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """A copy of a scene-file structure with ``values`` set at their key paths.

    ``scene.time`` (or ``scene.times``) replaces both time keys of the file;
    a key that chooses a grid form (``grid.bounds``, ``grid.west``,
    ``grid.raster``) drops the file's other grid forms; ``grid`` replaces
    the whole ``[grid]`` table. Checking the result is
    :func:`glint.scene.scene_from_dict`'s job, which names bad key paths.

    Examples
    --------
    >>> apply_key_paths({"surface": {"wind_speed": 5.0}}, {"surface.wind_speed": 7.5})
    {'surface': {'wind_speed': 7.5}}
    """
    out = copy.deepcopy(dict(data))
    if grid is not None:
        out["grid"] = dict(grid)
    for path, value in values.items():
        parts = str(path).split(".")
        table: Any = out
        for part in parts[:-1]:
            nxt = table.get(part)
            if not isinstance(nxt, dict):
                nxt = {}
                table[part] = nxt
            table = nxt
        key = parts[-1]
        if parts[:-1] == ["scene"] and key in ("time", "times"):
            table.pop("time", None)
            table.pop("times", None)
        if parts[:-1] == ["grid"]:
            for form in _GRID_FORMS:
                if key in form:
                    for other in _GRID_FORMS:
                        if other is not form:
                            for k in other:
                                table.pop(k, None)
        table[key] = list(value) if isinstance(value, tuple) else value
    return out


# ------------------------------------------------------------------ reading
def _read_toml(path: Path, what: str) -> dict[str, Any]:
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputFileError(f"{what} {str(path)!r} does not exist") from None
    except IsADirectoryError:
        raise InputFileError(f"{what} {str(path)!r} is a directory") from None
    except OSError as exc:
        raise InputFileError(f"cannot read {what} {str(path)!r}: {exc.strerror}") from None
    try:
        return tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise ManifestError([f"not UTF-8 text ({exc.reason} at byte {exc.start})"], str(path)) from None
    except tomllib.TOMLDecodeError as exc:
        raise ManifestError([f"invalid TOML: {exc}"], str(path)) from None


def _cell_value(text: str) -> Any:
    """A CSV cell as a TOML value when it reads as one (number, boolean,
    date-time, array), else as text."""
    try:
        return tomllib.loads(f"v = {text}")["v"]
    except tomllib.TOMLDecodeError:
        return text


def _tables(value: Any) -> list[Any]:
    return list(value) if isinstance(value, list) else [value]


class _Collector:
    def __init__(self, manifest: Path) -> None:
        self.manifest = manifest
        self.base = manifest.resolve().parent
        self.problems: list[str] = []
        self.entries: list[SceneEntry] = []

    def add(self, where: str, msg: str) -> None:
        self.problems.append(f"{where}: {msg}")

    def scene_file(self, value: Any, where: str) -> Path | None:
        if not isinstance(value, str) or not value:
            self.add(where, f"expected the path of a scene file (text), got {value!r}")
            return None
        path = Path(value).expanduser()
        path = (path if path.is_absolute() else self.base / path).resolve()
        if not path.is_file():
            self.add(where, f"scene file {value!r} does not exist (looked for {str(path)!r})")
            return None
        return path

    def entry(self, name: Any, file: Path, values: Mapping[str, Any], where: str,
              grid: Mapping[str, Any] | None = None) -> None:
        try:
            safe = safe_name(name)
        except InputError as exc:
            self.add(where, str(exc))
            return
        self.entries.append(SceneEntry(safe, file, dict(values), where, grid, str(name)))

    def values(self, table: Any, where: str) -> dict[str, Any] | None:
        if not isinstance(table, Mapping):
            self.add(where, f"expected a table of key paths and values, got {table!r}")
            return None
        bad = [k for k in table if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z0-9_]+)+", k)]
        if bad:
            self.add(where, f"key path(s) {bad!r} are not 'section.key' paths such as "
                     "'surface.wind_speed'")
            return None
        return dict(table)


def _read_scenes(items: Any, c: _Collector) -> None:
    if not isinstance(items, list):
        c.add("scenes", f"expected a list of scene files, got {items!r}")
        return
    for i, item in enumerate(items):
        where = f"scenes[{i}]"
        if isinstance(item, str):
            path = c.scene_file(item, where)
            if path is not None:
                c.entry(path.stem, path, {}, where)
            continue
        if not isinstance(item, Mapping):
            c.add(where, f"expected a scene file or a table {{file, name, set}}, got {item!r}")
            continue
        unknown = [k for k in item if k not in _ENTRY_KEYS]
        if unknown:
            c.add(where, f"unknown key(s) {unknown!r}; allowed: {', '.join(_ENTRY_KEYS)}")
            continue
        if "file" not in item:
            c.add(where, "required key 'file' is missing")
            continue
        path = c.scene_file(item["file"], f"{where}.file")
        values = c.values(item.get("set", {}), f"{where}.set")
        if path is not None and values is not None:
            c.entry(item.get("name", path.stem), path, values, where)


def _read_template(table: Any, where: str, c: _Collector) -> None:
    if not isinstance(table, Mapping):
        c.add(where, f"expected a table with 'scene' and 'rows', got {table!r}")
        return
    unknown = [k for k in table if k not in _TEMPLATE_KEYS]
    if unknown:
        c.add(where, f"unknown key(s) {unknown!r}; allowed: {', '.join(_TEMPLATE_KEYS)}")
        return
    if "scene" not in table or "rows" not in table:
        c.add(where, "needs 'scene' (the template scene file) and 'rows' (a CSV file or "
              "[[template.rows]] tables)")
        return
    path = c.scene_file(table["scene"], f"{where}.scene")
    rows = table["rows"]
    named: list[tuple[str, Any]] = []
    if isinstance(rows, str):
        csv_path = Path(rows).expanduser()
        csv_path = csv_path if csv_path.is_absolute() else c.base / csv_path
        try:
            with open(csv_path, newline="", encoding="utf-8") as f:
                reader = csv.DictReader(f)
                header = reader.fieldnames or []
                if "name" not in header:
                    c.add(f"{rows}", f"the CSV file needs a 'name' column; its columns are {header!r}")
                    return
                for row in reader:
                    line = reader.line_num
                    if None in row:
                        c.add(f"{rows} line {line}", f"more cells than columns ({len(header)})")
                        continue
                    vals = {k: _cell_value(v.strip()) for k, v in row.items()
                            if k != "name" and v is not None and v.strip() != ""}
                    named.append((f"{rows} line {line}", {"name": row["name"], **vals}))
        except FileNotFoundError:
            c.add(f"{where}.rows", f"rows file {rows!r} does not exist (looked for {str(csv_path)!r})")
            return
        except (OSError, UnicodeDecodeError, csv.Error) as exc:
            c.add(f"{where}.rows", f"cannot read rows file {rows!r}: {exc}")
            return
    elif isinstance(rows, list):
        named = [(f"{where}.rows[{i}]", r) for i, r in enumerate(rows)]
    else:
        c.add(f"{where}.rows", f"expected a CSV file name or [[template.rows]] tables, got {rows!r}")
        return
    if not named:
        c.add(f"{where}.rows", "no rows: give at least one")
    for pos, row in named:
        if not isinstance(row, Mapping):
            c.add(pos, f"expected a table, got {row!r}")
            continue
        if "name" not in row:
            c.add(pos, "required key 'name' is missing (the scene's folder name)")
            continue
        values = c.values({k: v for k, v in row.items() if k != "name"}, pos)
        if path is not None and values is not None:
            prefix = table.get("name")
            name = f"{prefix}_{row['name']}" if isinstance(prefix, str) and prefix else row["name"]
            c.entry(name, path, values, pos)


# ------------------------------------------------------------------ the model
@dataclass(frozen=True)
class Manifest:
    """A read manifest: its file and its scene entries in order."""

    path: Path
    entries: tuple[SceneEntry, ...]
    description: str = ""

    def resolve(self) -> list[ResolvedScene]:
        """Build and validate every scene.

        Raises
        ------
        ManifestError
            Listing every entry that does not make a valid scene, each with
            its position and the scene's key-path problems.
        """
        problems: list[str] = []
        out: list[ResolvedScene] = []
        cache: dict[Path, dict[str, Any]] = {}
        for e in self.entries:
            try:
                if e.file not in cache:
                    cache[e.file] = _read_toml(e.file, "scene file")
                data = apply_key_paths(cache[e.file], e.values, e.grid)
                scene = scene_from_dict(data, base_dir=e.file.parent, source=e.file)
            except SceneError as exc:
                detail = "; ".join(exc.problems)
                problems.append(f"{e.where} ({e.name!r}, {e.file.name}): {detail}")
                continue
            except ManifestError as exc:
                problems.append(f"{e.where} ({e.name!r}): scene file {str(e.file)!r}: "
                                f"{'; '.join(exc.problems)}")
                continue
            except GlintError as exc:
                problems.append(f"{e.where} ({e.name!r}): {exc}")
                continue
            out.append(ResolvedScene(e, data, scene))
        if problems:
            raise ManifestError(problems, str(self.path))
        return out


def load_manifest(path: str | Path, *, confirm: bool = False,
                  max_tile_scenes: int | None = None) -> Manifest:
    """Read a batch manifest and list its scenes.

    Parameters
    ----------
    path : path-like
        The manifest (TOML). Relative paths inside it are resolved against
        its directory.
    confirm : bool
        Allow tile grids that expand to more than ``max_tile_scenes`` scenes
        (``--yes`` on the command line).
    max_tile_scenes : int, optional
        Largest number of scenes a manifest's tile grids may expand to
        without ``confirm``; default
        :data:`glint.workflows.batch.tiles.MAX_TILE_SCENES`.

    Returns
    -------
    Manifest

    Raises
    ------
    InputFileError
        If the manifest does not exist or cannot be read.
    ManifestError
        Listing every problem with its position: unknown keys, missing scene
        files, bad rows, bad tile grids, names that would leave the output
        directory, names that collide (also after sanitising, ignoring case),
        a tile grid over the limit without ``confirm``.
    """
    from glint.workflows.batch import tiles as _tiles

    path = Path(path).expanduser()
    data = _read_toml(path, "batch manifest")
    c = _Collector(path)
    unknown = [k for k in data if k not in _TOP_KEYS]
    if unknown:
        c.add("manifest", f"unknown key(s) or table(s) {unknown!r}; allowed: {', '.join(_TOP_KEYS)}")
    if not any(k in data for k in ("scenes", "template", "tiles")):
        c.add("manifest", "names no scenes: give 'scenes = [...]', a [template] with rows, or "
              "a [tiles] grid")
    if "scenes" in data:
        _read_scenes(data["scenes"], c)
    if "template" in data:
        many = isinstance(data["template"], list)
        for i, t in enumerate(_tables(data["template"])):
            _read_template(t, f"template[{i}]" if many else "template", c)
    if "tiles" in data:
        many = isinstance(data["tiles"], list)
        limit = _tiles.MAX_TILE_SCENES if max_tile_scenes is None else int(max_tile_scenes)
        total = 0
        for i, t in enumerate(_tables(data["tiles"])):
            where = f"tiles[{i}]" if many else "tiles"
            try:
                spec = _tiles.TileGridSpec.from_table(t, where=where, base_dir=c.base)
                entries = spec.entries(c.scene_file(t.get("scene"), f"{where}.scene"))
            except (InputError, InputFileError) as exc:
                c.problems.append(str(exc))
                continue
            total += len(entries)
            c.entries.extend(entries)
        if total > limit and not confirm:
            c.add("tiles", f"the tile grid(s) expand to {total} scenes, more than the "
                  f"{limit} allowed without confirmation; check tile_size and the times, "
                  "then pass --yes (confirm=True from Python) to run them all")
    seen: dict[str, SceneEntry] = {}
    for e in c.entries:
        key = e.name.lower()
        if key in seen:
            first = seen[key]
            c.add(e.where, f"scene name {e.label!r} gives the folder {e.name!r}, which {first.where} "
                  f"(name {first.label!r}) already uses; folder names must differ after "
                  "sanitising and ignoring case")
        else:
            seen[key] = e
    if c.problems:
        raise ManifestError(c.problems, str(path))
    desc = data.get("description", "")
    return Manifest(path=path.resolve(), entries=tuple(c.entries),
                    description=desc if isinstance(desc, str) else "")


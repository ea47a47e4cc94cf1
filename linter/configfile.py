"""Configuration files: discovery, validation with the closest valid name, origins of every value.

Two places hold a configuration: ``deckwarden.yaml`` (or ``.deckwarden.yaml``) and the table
``[tool.deckwarden]`` of a ``pyproject.toml``. They are looked for from the first path checked
upwards; the nearest folder that has one wins (in one folder the YAML file wins over pyproject).
``--config FILE`` names the file instead (YAML, or a pyproject.toml).

Every key and value is checked here, before :meth:`linter.config.Config.from_mapping` builds the
configuration: a bad one is a :class:`ConfigError` naming the file, the key (with its line for
YAML) and what is allowed, with the closest valid name when there is one.
"""
from __future__ import annotations

import functools
import os
from pathlib import Path
from typing import Any, Optional

from .findings import SEVERITIES

YAML_NAMES = ("deckwarden.yaml", ".deckwarden.yaml")
PYPROJECT = "pyproject.toml"
RULE_VALUES = (*SEVERITIES, "off")
#: top-level keys and what they take (shown in messages)
KEYS = {
    "fail_on": "one of error, warning, note",
    "dialect": "a dialect name, or a mapping format -> dialect",
    "rules": "a mapping rule id -> error | warning | note | off",
    "select": "a list of rule ids or families",
    "ignore": "a list of rule ids or families",
    "thresholds": "a mapping family -> {name: value} (see linter/data/thresholds.yaml)",
    "units": "a unit system name",
    "solver_cwd": "a folder, relative to the configuration file",
    "include_root": "a folder, relative to the configuration file",
    "allow_include_outside": "true or false",
    "max_include_depth": "a whole number of 1 or more",
    "max_file_size_mb": "a number above 0",
    "jobs": "a whole number of 1 or more",
    "exclude": "a list of glob patterns, relative to the configuration file",
    "per_path": "a list of {paths: [globs], rules: ..., select: ..., ignore: ...}",
}
PER_PATH_KEYS = ("paths", "rules", "select", "ignore")


class ConfigError(ValueError):
    pass


def closest(name: str, known) -> str:
    """``; did you mean: X?`` with the closest known names, or an empty string."""
    name = str(name)
    known = sorted(set(known))
    import difflib  # only for error messages

    close = difflib.get_close_matches(name, known, n=3, cutoff=0.6)
    close += [k for k in known if "/" in k and k.split("/", 1)[1] == name and k not in close]
    return f"; did you mean: {', '.join(close[:4])}?" if close else ""


# --------------------------------------------------------------------------- known names


def unit_system_names() -> dict[str, str]:
    """Every accepted unit-system name and alias -> the system it names (from linter/data/units.yaml)."""
    from importlib import resources

    from .safe_yaml import load_package_yaml

    raw = load_package_yaml(resources.files("linter").joinpath("data/units.yaml").read_text(encoding="utf-8"))
    out = {}
    for name, d in (raw.get("systems") or {}).items():
        out[name] = name
        for a in d.get("aliases") or ():
            out[str(a).lower()] = name
    return out


def unit_systems_text() -> str:
    """``m-kg-s (si, mks), mm-tonne-s (...)``: the accepted unit systems with their aliases."""
    by: dict[str, list[str]] = {}
    for alias, name in unit_system_names().items():
        by.setdefault(name, [])
        if alias != name:
            by[name].append(alias)
    return ", ".join(f"{n} ({', '.join(a)})" if a else n for n, a in by.items())


def dialects_by_format() -> dict[str, tuple[str, ...]]:
    """format -> the dialects it accepts (the format package's ``DIALECTS``, else its default one)."""
    from . import parsers

    out = {}
    for fmt in parsers.names():
        try:
            mod = parsers.get(fmt)
        except Exception:
            continue
        default = getattr(mod, "DEFAULT_DIALECT", fmt)
        out[fmt] = tuple(dict.fromkeys((default, *getattr(mod, "DIALECTS", ()))))
    return out


def rule_names() -> tuple[set[str], set[str]]:
    """(rule ids, rule ids and families)."""
    from . import registry

    ids = set(registry.load())
    return ids, ids | {i.split("/", 1)[0] for i in ids} | set(registry.FAMILIES)


# --------------------------------------------------------------------------- discovery and reading


def _pyproject_table(path: Path) -> Optional[dict]:
    """The ``[tool.deckwarden]`` table of a pyproject.toml, or None when it has none."""
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise ConfigError(f"{path}: cannot read the file ({exc.strerror or exc})") from None
    if b"deckwarden" not in raw:
        return None
    try:
        import tomllib
    except ImportError:  # Python 3.10
        try:
            import tomli as tomllib  # type: ignore[no-redef]
        except ImportError:
            raise ConfigError(f"{path}: reading [tool.deckwarden] needs Python 3.11 or the tomli package") from None
    try:
        doc = tomllib.loads(raw.decode("utf-8", "replace"))
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{path}: not valid TOML ({exc})") from None
    tool = doc.get("tool")
    if not isinstance(tool, dict) or "deckwarden" not in tool:
        return None
    table = tool["deckwarden"]
    if not isinstance(table, dict):
        raise ConfigError(f"{path}: [tool.deckwarden] must be a table")
    return table


def find_config(start: str) -> Optional[Path]:
    """The nearest configuration from ``start`` upwards (a YAML file, or a pyproject.toml with [tool.deckwarden])."""
    here = Path(start).resolve()
    if not here.is_dir():
        here = here.parent
    for folder in (here, *here.parents):
        for name in YAML_NAMES:
            if (folder / name).is_file():
                return folder / name
        cand = folder / PYPROJECT
        if cand.is_file() and _pyproject_table(cand) is not None:
            return cand
    return None


def _yaml_lines(text: str) -> dict[tuple, int]:
    """(key, subkey, ...) -> 1-based line of every mapping key of a YAML document (list items by index)."""
    import yaml

    from .safe_yaml import _NoAliasLoader

    out: dict[tuple, int] = {}
    try:
        node = yaml.compose(text, Loader=_NoAliasLoader)  # noqa: S506 - the project's safe loader
    except Exception:
        return out

    def walk(n, prefix: tuple) -> None:
        if isinstance(n, yaml.MappingNode):
            for k, v in n.value:
                key = prefix + (str(k.value),)
                out[key] = k.start_mark.line + 1
                walk(v, key)
        elif isinstance(n, yaml.SequenceNode):
            for i, v in enumerate(n.value):
                out[prefix + (i,)] = v.start_mark.line + 1
                walk(v, prefix + (i,))

    walk(node, ())
    return out


def read_config(path: str) -> tuple[dict, dict[tuple, int], str]:
    """(mapping, key lines, label) of a configuration file; label is ``file`` or ``file [tool.deckwarden]``."""
    from .safe_yaml import load_yaml_file

    p = Path(path)
    if p.name == PYPROJECT or p.suffix == ".toml":
        table = _pyproject_table(p)
        if table is None:
            raise ConfigError(f"{path}: has no [tool.deckwarden] table")
        return table, {}, f"{path} [tool.deckwarden]"
    try:
        data = load_yaml_file(path)
    except OSError as exc:
        raise ConfigError(f"{path}: cannot read the configuration ({exc.strerror or exc})") from None
    except ValueError as exc:
        raise ConfigError(str(exc)) from None
    if data is None:
        data = {}
    if not isinstance(data, dict):
        raise ConfigError(f"{path}: the top level must be a mapping of settings")
    try:
        text = p.read_text(encoding="utf-8", errors="replace")
        lines = _yaml_lines(text)
    except OSError:
        lines = {}
    return data, lines, str(path)


# --------------------------------------------------------------------------- validation


class _Checker:
    def __init__(self, label: str, lines: dict[tuple, int]):
        self.label = label
        self.lines = lines
        self._rules: Optional[tuple[set, set]] = None

    def where(self, key: tuple) -> str:
        line = None
        for n in range(len(key), 0, -1):
            line = self.lines.get(key[:n])
            if line:
                break
        dotted = ".".join(str(k) if not isinstance(k, int) else f"[{k}]" for k in key).replace(".[", "[")
        return f"{self.label}" + (f", line {line}" if line else "") + f": {dotted}"

    def fail(self, key: tuple, text: str) -> None:
        raise ConfigError(f"{self.where(key)}: {text}")

    @property
    def rules(self) -> tuple[set, set]:
        if self._rules is None:
            self._rules = rule_names()
        return self._rules

    def names_list(self, key: tuple, value: Any) -> None:
        items = [value] if isinstance(value, str) else value
        if not isinstance(items, list) or not all(isinstance(v, str) for v in items):
            self.fail(key, "must be a list of rule ids or families")
        known = self.rules[1]
        for i, v in enumerate(items):
            if v not in known:
                self.fail(key + (i,) if not isinstance(value, str) else key,
                          f"unknown rule or family {v!r}{closest(v, known)}")

    def rule_map(self, key: tuple, value: Any) -> None:
        if not isinstance(value, dict):
            self.fail(key, "must map rule ids to error | warning | note | off")
        ids, known = self.rules
        for rid, sev in value.items():
            rid = str(rid)
            if rid not in ids:
                hint = (" (a family: switch it off with ignore: instead)" if rid in known else closest(rid, ids))
                self.fail(key + (rid,), f"unknown rule id {rid!r}{hint}")
            word = "off" if sev is False else str(sev).lower()
            if word not in RULE_VALUES:
                self.fail(key + (rid,), f"{sev!r} is not one of {', '.join(RULE_VALUES)}{closest(word, RULE_VALUES)}")

    def globs(self, key: tuple, value: Any) -> None:
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list) or not value or not all(isinstance(v, str) and v.strip() for v in value):
            self.fail(key, "must be a list of glob patterns")


def check_mapping(data: dict, label: str, lines: Optional[dict] = None) -> None:
    """Raise :class:`ConfigError` for the first bad key or value of a configuration mapping."""
    c = _Checker(label, lines or {})
    for key, value in data.items():
        k = (str(key),)
        if key not in KEYS:
            c.fail(k, f"unknown key{closest(str(key), KEYS)} (keys: {', '.join(KEYS)})")
        if key == "fail_on":
            if value not in SEVERITIES:
                c.fail(k, f"{value!r} is not one of {', '.join(SEVERITIES)}{closest(str(value), SEVERITIES)}")
        elif key == "dialect":
            check_dialect(value, lambda sub, text: c.fail(k + sub, text))
        elif key == "rules":
            c.rule_map(k, value)
        elif key in ("select", "ignore"):
            c.names_list(k, value)
        elif key == "thresholds":
            if not isinstance(value, dict):
                c.fail(k, "must be a mapping family -> {name: value}")
        elif key == "units":
            check_units(value, lambda text: c.fail(k, text))
        elif key in ("solver_cwd", "include_root"):
            if not isinstance(value, str) or not value.strip():
                c.fail(k, "must be a folder name")
        elif key == "allow_include_outside":
            if not isinstance(value, bool):
                c.fail(k, "must be true or false")
        elif key in ("max_include_depth", "jobs"):
            if isinstance(value, bool) or not isinstance(value, int) or value < 1:
                c.fail(k, f"{value!r}: must be a whole number of 1 or more")
        elif key == "max_file_size_mb":
            if isinstance(value, bool) or not isinstance(value, (int, float)) or not value > 0:
                c.fail(k, f"{value!r}: must be a number above 0")
        elif key == "exclude":
            c.globs(k, value)
        elif key == "per_path":
            if not isinstance(value, list):
                c.fail(k, KEYS["per_path"])
            for i, item in enumerate(value):
                ki = k + (i,)
                if not isinstance(item, dict) or "paths" not in item:
                    c.fail(ki, "each entry is a mapping with paths: [globs] and rules/select/ignore")
                for sub, v in item.items():
                    if sub not in PER_PATH_KEYS:
                        c.fail(ki + (str(sub),), f"unknown key{closest(str(sub), PER_PATH_KEYS)} "
                                                 f"(keys: {', '.join(PER_PATH_KEYS)})")
                    if sub == "paths":
                        c.globs(ki + (sub,), v)
                    elif sub == "rules":
                        c.rule_map(ki + (sub,), v)
                    else:
                        c.names_list(ki + (sub,), v)


def check_units(value: Any, fail) -> str:
    """The canonical name of a unit system; ``fail(text)`` for an unknown one."""
    names = unit_system_names()
    key = str(value).strip().lower().replace(" ", "") if isinstance(value, str) else None
    if key not in names:
        systems = sorted(set(names.values()))
        fail(f"unknown unit system {value!r}{closest(str(key or value), names)} (systems: {', '.join(systems)})")
    return names[key]


def check_dialect(value: Any, fail) -> None:
    """``value``: a dialect name or a mapping format -> dialect; ``fail(subkey, text)`` when it is not known."""
    known = dialects_by_format()
    every = sorted({d for ds in known.values() for d in ds})
    if isinstance(value, str):
        if value.strip().lower() not in every:
            fail((), f"unknown dialect {value!r}{closest(value.strip().lower(), every)} ({listing(known)})")
        return
    if not isinstance(value, dict):
        fail((), "must be a dialect name or a mapping format -> dialect")
    for fmt, name in value.items():
        fmt = str(fmt).strip().lower()
        if fmt not in known:
            fail((str(fmt),), f"unknown format {fmt!r}{closest(fmt, known)} (formats: {', '.join(known)})")
        d = str(name).strip().lower()
        if d not in known[fmt]:
            fail((fmt,), f"unknown {fmt} dialect {name!r}{closest(d, known[fmt])} "
                         f"({fmt} dialects: {', '.join(known[fmt])})")


def listing(known: Optional[dict] = None) -> str:
    """``keyword: calculix; bulk: mystran, nastran`` (the accepted dialects per format)."""
    known = known if known is not None else dialects_by_format()
    return "; ".join(f"{fmt}: {', '.join(ds)}" for fmt, ds in known.items())


def relative_to(path: str, base: Optional[str]) -> str:
    """``path`` relative to folder ``base`` with ``/`` separators (absolute when it is not under it)."""
    p = os.path.abspath(path)
    if base:
        try:
            rel = os.path.relpath(p, base)
            if not rel.startswith(".."):
                p = rel
        except ValueError:  # another drive
            pass
    return p.replace(os.sep, "/")


# --------------------------------------------------------------------------- glob patterns


@functools.lru_cache(maxsize=512)
def glob_regex(pattern: str):
    """A compiled regex for a glob relative to the configuration folder.

    ``*`` and ``?`` stay inside one path segment, ``**`` spans segments; a pattern without ``/``
    matches a name at any depth. A pattern that matches a folder matches everything under it.
    """
    import re

    pat = pattern.strip().replace(os.sep, "/")
    anchored = "/" in pat.rstrip("/")
    while pat.startswith("./"):
        pat = pat[2:]
    pat = pat.strip("/")
    out, i = [], 0
    while i < len(pat):
        if pat.startswith("**/", i):
            out.append("(?:.*/)?")
            i += 3
        elif pat.startswith("**", i):
            out.append(".*")
            i += 2
        elif pat[i] == "*":
            out.append("[^/]*")
            i += 1
        elif pat[i] == "?":
            out.append("[^/]")
            i += 1
        else:
            out.append(re.escape(pat[i]))
            i += 1
    body = "".join(out)
    return re.compile(("" if anchored else "(?:.*/)?") + body + "(?:/.*)?")


def matches(patterns, rel_path: str) -> bool:
    """Does ``rel_path`` (relative, ``/`` separators) match any of the compiled ``patterns``?"""
    return any(rx.fullmatch(rel_path) for rx in patterns)

"""Configuration: defaults, thresholds (data, read once) and user overrides.

A configuration file is YAML (``deckwarden.yaml`` or ``.deckwarden.yaml``), found in the
current folder or above it, or named with ``--config``. Keys::

    fail_on: error            # error | warning | note
    dialect: {keyword: calculix, bulk: mystran}
    rules: {elastic/poisson-negative: off, units/implausible: note}
    select: [elastic, model/undefined-material]   # only these (families or ids)
    ignore: [units]
    thresholds: {elastic: {near_incompressible_nu: 0.49}}
    units: mm-tonne-s         # declare the unit system instead of inferring it
    solver_cwd: run/          # resolve keyword *INCLUDE as the solver would from this folder
    include_root: .           # includes may not leave this folder ...
    allow_include_outside: false   # ... unless this is true
    max_include_depth: 16
    max_file_size_mb: 4096
    jobs: 1
    exclude: [generated/**, "*.bak.inp"]   # globs (relative to this file) left out of folder walks
    per_path:                 # globs with their own rule choices
      - {paths: [legacy/**], rules: {units/mismatch: warning}, ignore: [parse/empty-field]}

The same keys may sit in ``[tool.deckwarden]`` of a ``pyproject.toml``. Discovery, validation and
the origin of every value: :mod:`linter.configfile`.
"""
from __future__ import annotations

import copy
import functools
import os
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any, Optional

from . import configfile
from .configfile import ConfigError  # noqa: F401  (re-exported)
from .findings import SEVERITIES
from .safe_yaml import load_package_yaml

DEFAULT_DIALECTS = {"keyword": "calculix", "bulk": "mystran", "mesh": "meshio", "aster": "code_aster"}


@functools.cache
def default_thresholds() -> dict[str, Any]:
    text = resources.files("linter").joinpath("data/thresholds.yaml").read_text(encoding="utf-8")
    return load_package_yaml(text)


def _kind(default: Any) -> str:
    if isinstance(default, list):
        return f"a list of {len(default)} numbers"
    if default is None:
        return "a number or null"
    return "a whole number" if isinstance(default, int) else "a number"


def _fits(value: Any, default: Any) -> bool:
    def number(x: Any) -> bool:
        return isinstance(x, (int, float)) and not isinstance(x, bool)

    if isinstance(default, list):
        return isinstance(value, list) and len(value) == len(default) and all(number(x) for x in value)
    if default is None:
        return value is None or number(value)
    if isinstance(default, int) and not isinstance(default, bool):
        return number(value) and float(value).is_integer()
    return number(value)


def _plugin_families() -> set[str]:
    from . import registry

    return {r.family for r in registry.load().values() if r.pack != "builtin"}


def check_thresholds(over: dict, source: Optional[str], defaults: Optional[dict] = None, prefix: str = "") -> None:
    """Raise :class:`ConfigError` naming the key and the file for a threshold that does not exist or a
    value of the wrong type under ``thresholds:``. Top-level keys of a third-party rule pack's family are
    left to that pack."""
    import difflib

    where = source or "configuration"
    defaults = default_thresholds() if defaults is None else defaults
    for k, v in over.items():
        key = f"{prefix}{k}"
        if k not in defaults:
            if not prefix and str(k) in _plugin_families():
                continue
            close = difflib.get_close_matches(str(k), [str(d) for d in defaults], n=1, cutoff=0.6)
            hint = f"; did you mean {prefix + close[0]!r}?" if close else ""
            raise ConfigError(f"{where}: unknown threshold {key!r} under 'thresholds'{hint}")
        d = defaults[k]
        if isinstance(d, dict):
            if not isinstance(v, dict):
                raise ConfigError(f"{where}: 'thresholds.{key}' must be a mapping of thresholds, not {v!r}")
            check_thresholds(v, source, d, key + ".")
        elif not _fits(v, d):
            raise ConfigError(f"{where}: threshold {key!r} must be {_kind(d)}, not {v!r}")


def _merge(base: dict, over: dict) -> dict:
    out = copy.deepcopy(base)
    for k, v in over.items():
        if isinstance(v, dict) and isinstance(out.get(k), dict):
            out[k] = _merge(out[k], v)
        else:
            out[k] = v
    return out


@dataclass
class Config:
    fail_on: str = "error"
    dialects: dict[str, str] = field(default_factory=lambda: dict(DEFAULT_DIALECTS))
    rules: dict[str, str] = field(default_factory=dict)
    select: list[str] = field(default_factory=list)
    ignore: list[str] = field(default_factory=list)
    # a copy per Config: the cached defaults must never be changed through one configuration
    thresholds: dict[str, Any] = field(default_factory=lambda: copy.deepcopy(default_thresholds()))
    units: Optional[str] = None
    solver_cwd: Optional[str] = None
    include_root: Optional[str] = None
    allow_include_outside: bool = False
    max_include_depth: int = 16
    max_file_size_mb: float = 4096.0
    jobs: int = 1
    #: glob patterns (relative to the configuration file) that folder walks leave out
    exclude: list[str] = field(default_factory=list)
    #: [{"paths": [globs], "rules": {...}, "select": [...], "ignore": [...]}]: settings for some decks
    per_path: list[dict] = field(default_factory=list)
    #: material file for the meshes given on the command line (``--materials``); not a configuration key
    materials: Optional[str] = None
    #: honour suppression comments in the decks (``--no-inline-suppressions``: False); not a file key
    inline_suppressions: bool = True
    #: the file this configuration came from (None: defaults)
    source: Optional[str] = None
    #: key -> where its value came from (file and line, or a command-line option); absent: the default
    origins: dict[str, str] = field(default_factory=dict)

    # -- queries used by the engine ------------------------------------------------------

    def threshold(self, dotted: str) -> Any:
        node: Any = self.thresholds
        for part in dotted.split("."):
            if not isinstance(node, dict) or part not in node:
                raise KeyError(f"unknown threshold {dotted!r}")
            node = node[part]
        return node

    def rule_enabled(self, rule_id: str) -> bool:
        family = rule_id.split("/", 1)[0]
        if str(self.rules.get(rule_id, "")).lower() in ("off", "false", "none"):
            return False
        if self.select and not any(s in (rule_id, family) for s in self.select):
            return False
        if any(s in (rule_id, family) for s in self.ignore):
            return False
        return True

    def severity_override(self, rule_id: str) -> Optional[str]:
        sev = self.rules.get(rule_id)
        return sev if sev in SEVERITIES else None

    def dialect_for(self, fmt: str) -> str:
        return self.dialects.get(fmt) or DEFAULT_DIALECTS.get(fmt, fmt)

    @property
    def max_file_size(self) -> int:
        return int(self.max_file_size_mb * 1024 * 1024)

    def _rel(self, path: str) -> str:
        return configfile.relative_to(path, os.path.dirname(self.source) if self.source else os.getcwd())

    def excluded(self, path: str) -> bool:
        """Does an ``exclude`` glob match ``path``?"""
        if not self.exclude:
            return False
        return configfile.matches([configfile.glob_regex(g) for g in self.exclude], self._rel(path))

    def for_path(self, path: str) -> "Config":
        """The configuration for one deck: ``per_path`` entries whose globs match it, applied in order."""
        if not self.per_path:
            return self
        rel, out = self._rel(path), None
        for entry in self.per_path:
            globs = entry["paths"] if isinstance(entry["paths"], list) else [entry["paths"]]
            if not configfile.matches([configfile.glob_regex(g) for g in globs], rel):
                continue
            out = out or copy.copy(self)
            if "rules" in entry:
                out.rules = {**out.rules, **{str(k): ("off" if v is False else str(v).lower())
                                             for k, v in entry["rules"].items()}}
            for key in ("select", "ignore"):
                if key in entry:
                    val = entry[key]
                    setattr(out, key, list(getattr(out, key)) + ([val] if isinstance(val, str) else list(val)))
        return out or self

    # -- construction --------------------------------------------------------------------

    @classmethod
    def from_mapping(cls, data: dict[str, Any], source: Optional[str] = None,
                     label: Optional[str] = None, lines: Optional[dict] = None) -> "Config":
        if data is None:
            data = {}
        if not isinstance(data, dict):
            raise ConfigError(f"{source or 'configuration'}: the top level must be a mapping")
        configfile.check_mapping(data, label or source or "configuration", lines)
        cfg = cls(source=source)
        for key in data:
            line = (lines or {}).get((str(key),))
            cfg.origins[str(key)] = f"{label or source or 'configuration'}" + (f", line {line}" if line else "")
        known = set(cls.__dataclass_fields__) - {"source", "dialects"} | {"dialect"}
        unknown = set(data) - known
        if unknown:
            raise ConfigError(f"{source or 'configuration'}: unknown key(s): {', '.join(sorted(unknown))}")
        for key, value in data.items():
            if key == "dialect":
                if isinstance(value, str):
                    known = configfile.dialects_by_format()
                    cfg.dialects.update({f: value.strip().lower() for f, ds in known.items()
                                         if value.strip().lower() in ds})
                elif isinstance(value, dict):
                    cfg.dialects.update({str(k): str(v) for k, v in value.items()})
                else:
                    raise ConfigError(f"{source}: 'dialect' must be a name or a mapping format -> dialect")
            elif key == "thresholds":
                if not isinstance(value, dict):
                    raise ConfigError(f"{source}: 'thresholds' must be a mapping")
                check_thresholds(value, source)
                cfg.thresholds = _merge(default_thresholds(), value)
            elif key == "rules":
                if not isinstance(value, dict):
                    raise ConfigError(f"{source}: 'rules' must map rule ids to a severity or off")
                cfg.rules = {str(k): ("off" if v is False else str(v).lower()) for k, v in value.items()}
            elif key in ("select", "ignore", "exclude"):
                setattr(cfg, key, [value] if isinstance(value, str) else [str(v) for v in value or ()])
            else:
                setattr(cfg, key, value)
        if cfg.fail_on not in SEVERITIES:
            raise ConfigError(f"{source or 'configuration'}: fail_on must be one of {', '.join(SEVERITIES)}")
        if source and cfg.include_root is not None:
            cfg.include_root = str((Path(source).parent / cfg.include_root).resolve())
        if source and cfg.solver_cwd is not None:
            cfg.solver_cwd = str((Path(source).parent / cfg.solver_cwd).resolve())
        return cfg

    @classmethod
    def load(cls, path: Optional[str] = None, start: Optional[str] = None) -> "Config":
        """Load ``path``, or the nearest configuration found from ``start`` (default: cwd) upwards."""
        if path is None:
            found = configfile.find_config(start or os.getcwd())
            if found is None:
                return cls()
            path = str(found)
        data, lines, label = configfile.read_config(path)
        return cls.from_mapping(data, source=str(path), label=label, lines=lines)


def find_config(start: str) -> Optional[Path]:
    return configfile.find_config(start)

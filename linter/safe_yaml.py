"""YAML loading for configuration files: safe loader, size limit, no aliases.

PyYAML has no limit of its own on document size or alias expansion, so the
loader subclasses ``yaml.SafeLoader`` and refuses anchors/aliases outright.
"""
from __future__ import annotations

import yaml

MAX_YAML_BYTES = 1 << 20  # 1 MiB is far more than any configuration needs


class YamlRefused(ValueError):
    pass


class _NoAliasLoader(yaml.SafeLoader):
    def compose_node(self, parent, index):  # type: ignore[override]
        if self.check_event(yaml.events.AliasEvent):
            event = self.peek_event()
            raise YamlRefused(f"line {event.start_mark.line + 1}: YAML aliases are not accepted")
        node = super().compose_node(parent, index)
        return node

    def compose_scalar_node(self, anchor):  # type: ignore[override]
        return super().compose_scalar_node(anchor)


def _check_size(text: str, what: str) -> None:
    if len(text.encode("utf-8", "replace")) > MAX_YAML_BYTES:
        raise YamlRefused(f"{what} is larger than {MAX_YAML_BYTES} bytes")


def _refused(exc: yaml.YAMLError, what: str) -> YamlRefused:
    """A YAML syntax error as a refusal that names the line."""
    mark = getattr(exc, "problem_mark", None)
    where = f"line {mark.line + 1}: " if mark is not None else ""
    return YamlRefused(f"{what}: {where}{getattr(exc, 'problem', None) or exc}")


def load_yaml_text(text: str, what: str = "YAML document"):
    _check_size(text, what)
    try:
        return yaml.load(text, Loader=_NoAliasLoader)  # noqa: S506 - safe loader subclass
    except YamlRefused:
        raise
    except yaml.YAMLError as exc:
        raise _refused(exc, what) from None


def load_yaml_file(path) -> object:
    import os

    size = os.path.getsize(path)
    if size > MAX_YAML_BYTES:
        raise YamlRefused(f"{path}: larger than {MAX_YAML_BYTES} bytes")
    with open(path, "rb") as fh:
        raw = fh.read(MAX_YAML_BYTES + 1)
    return load_yaml_text(raw.decode("utf-8", "replace"), str(path))


def load_package_yaml(text: str):
    """Load one of deckwarden's own data files (trusted, shipped with the package).

    Uses libyaml's safe loader when PyYAML was built with it (much faster at start-up), else the
    pure-Python safe loader. Never used for user files: those go through :func:`load_yaml_file`.
    """
    loader = getattr(yaml, "CSafeLoader", None) or yaml.SafeLoader
    return yaml.load(text, Loader=loader)  # noqa: S506 - a safe loader


def compose_yaml_text(text: str, what: str = "YAML document"):
    """The node tree of a user YAML document (same guards as :func:`load_yaml_text`).

    Nodes keep their position: ``node.start_mark.line`` is the 0-based line. None for an empty
    document. Scalars are not converted; :func:`scalar_value` does that with the safe resolver.
    """
    _check_size(text, what)
    loader = None
    try:
        loader = _NoAliasLoader(text)
        return loader.get_single_node()
    except YamlRefused:
        raise
    except yaml.YAMLError as exc:
        raise _refused(exc, what) from None
    finally:
        if loader is not None:
            loader.dispose()


def scalar_value(node):
    """The Python value of a scalar node, as the safe loader constructs it (int, float, bool, None, str).

    A plain scalar the safe loader resolves to a tag it has no constructor for (``=``, the YAML 1.1
    "value" key) is its text."""
    try:
        return _NoAliasLoader("").construct_object(node)
    except yaml.constructor.ConstructorError:
        return str(node.value) if isinstance(node, yaml.ScalarNode) else None

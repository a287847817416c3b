"""YAML text -> the validated ``RunConfig``; errors name the key path (``substrates.0.smiles``) and, where the YAML
has one, the line, with a "did you mean" for a misspelt key. The text is read by ``yamlreader`` (plain decimal
numbers, no anchors or aliases, bounded size and depth)."""

from __future__ import annotations

import difflib
from typing import Any

import yaml
from pydantic import BaseModel, ValidationError

from elimscan.config.run import RunConfig
from elimscan.config.yamlreader import SEXAGESIMAL, StrictLoader, read_yaml
from elimscan.errors import ConfigError


def _node_line(root: yaml.Node | None, loc: tuple[Any, ...]) -> int | None:
    """Return the 1-based YAML line of the node at a pydantic error location, or the nearest parent."""
    node, line = root, (root.start_mark.line + 1 if root is not None else None)
    for part in loc:
        if isinstance(node, yaml.MappingNode):
            match = next((v for k, v in node.value if k.value == part), None)
            if match is None:
                key = next((k for k, _ in node.value if k.value == part), None)
                return key.start_mark.line + 1 if key is not None else line
            node = match
        elif isinstance(node, yaml.SequenceNode) and isinstance(part, int) and part < len(node.value):
            node = node.value[part]
        else:
            break
        line = node.start_mark.line + 1
    return line


def _key_line(root: yaml.Node | None, loc: tuple[Any, ...]) -> int | None:
    """Return the line of the key itself (for unknown keys), falling back to _node_line."""
    parent = root
    for part in loc[:-1]:
        if isinstance(parent, yaml.MappingNode):
            parent = next((v for k, v in parent.value if k.value == part), None)
        elif isinstance(parent, yaml.SequenceNode) and isinstance(part, int) and part < len(parent.value):
            parent = parent.value[part]
        else:
            parent = None
        if parent is None:
            break
    if isinstance(parent, yaml.MappingNode):
        for key, _ in parent.value:
            if key.value == loc[-1]:
                return key.start_mark.line + 1
    return _node_line(root, loc)


def _model_at(loc: tuple[Any, ...]) -> type[BaseModel] | None:
    """Return the config model class that holds the last key of an error location."""
    model: Any = RunConfig
    keyed = False  # the previous key was a mapping field (dict[str, Model]): this part is one of its keys
    for part in loc[:-1]:
        if isinstance(part, int) or keyed:
            keyed = False
            continue
        field = model.model_fields.get(part) if isinstance(model, type) and issubclass(model, BaseModel) else None
        if field is None:
            return None
        annotation = field.annotation
        keyed = getattr(annotation, "__origin__", None) is dict
        candidates = [annotation, *getattr(annotation, "__args__", ())]
        nested = [c for c in candidates for c in (c, *getattr(c, "__args__", ())) if isinstance(c, type) and issubclass(c, BaseModel)]
        if not nested:
            return None
        model = nested[0]
    return model if isinstance(model, type) and issubclass(model, BaseModel) else None


def _check_duplicate_keys(node: yaml.Node | None, path: str = "") -> None:
    """Raise ConfigError when a YAML mapping repeats a key (PyYAML would silently keep the last)."""
    if isinstance(node, yaml.MappingNode):
        seen: dict[str, int] = {}
        for key, value in node.value:
            name = str(key.value)
            if name in seen:
                raise ConfigError(f"key '{name}' appears twice (first on line {seen[name]})",
                                  key_path=f"{path}{name}", line=key.start_mark.line + 1)
            seen[name] = key.start_mark.line + 1
            _check_duplicate_keys(value, f"{path}{name}.")
    elif isinstance(node, yaml.SequenceNode):
        for i, item in enumerate(node.value):
            _check_duplicate_keys(item, f"{path}{i}.")


def _translate(err: ValidationError, root: yaml.Node | None) -> ConfigError:
    """Return a ConfigError for the first pydantic error, with key path, line and suggestion."""
    # an unknown key usually explains the rest (a misspelt required key): report it first
    errors = sorted(err.errors(), key=lambda e: e["type"] != "extra_forbidden")
    first = errors[0]
    loc = tuple(first["loc"])
    key_path = ".".join(str(p) for p in loc) or "(top level)"
    message = first["msg"].removeprefix("Value error, ")
    if first["type"] == "extra_forbidden":
        line = _key_line(root, loc)
        model = _model_at(loc)
        known = sorted(model.model_fields) if model is not None else []
        close = difflib.get_close_matches(str(loc[-1]), known, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        message = f"unknown key '{loc[-1]}'{hint} (allowed here: {', '.join(known)})"
    else:
        line = _node_line(root, loc)
        if first["type"] == "missing":
            message = f"required key '{loc[-1]}' is missing"
        elif "input" in first and not isinstance(first["input"], (dict, list)):
            if not (first["type"] == "value_error" and f"{first['input']}" in message):  # said already
                message = f"{message} (got {first['input']!r})"
            if isinstance(first["input"], str) and SEXAGESIMAL.match(first["input"].strip()):
                guess = first["input"].strip().replace(":", ".", 1) if first["input"].count(":") == 1 else None
                message += (": numbers are read as plain decimals (YAML 1.1 would read this as base 60)"
                            + (f"; did you mean {guess}?" if guess else ""))
    # errors on a parent of the first location are consequences of it (an emptied list)
    extra = sum(1 for e in errors[1:] if tuple(e["loc"]) != loc[: len(e["loc"])] and tuple(e["loc"])[:-1] != loc[:-1])
    if extra:
        message += f" [and {extra} more problem{'s' if extra > 1 else ''}]"
    return ConfigError(message, key_path=key_path, line=line)


def parse_config(text: str, source: str = "<config>") -> RunConfig:
    """Return the validated RunConfig for YAML text; raise ConfigError naming key path and line."""
    try:
        root, data = read_yaml(text)
    except yaml.YAMLError as err:
        mark = getattr(err, "problem_mark", None)
        line = mark.line + 1 if mark is not None else None
        problem = getattr(err, "problem", None) or str(err)
        raise ConfigError(f"{source}: YAML syntax error: {problem}", line=line) from err
    if data is None:
        raise ConfigError(f"{source}: the config is empty")
    if not isinstance(data, dict):
        raise ConfigError(f"{source}: the config must be a mapping of keys, got {type(data).__name__}", line=1)
    _check_duplicate_keys(root)
    try:
        return RunConfig.model_validate(data)
    except ValidationError as err:
        raise _translate(err, root) from err


def config_to_dict(config: RunConfig) -> dict[str, Any]:
    """Return the resolved config (all defaults filled in) as plain JSON-ready data."""
    return config.model_dump(mode="json")


def key_line(text: str, key_path: str) -> int | None:
    """Return the 1-based YAML line of a dotted key path (``substrates.0.smiles``) in config text, or None."""
    try:
        root = yaml.compose(text, Loader=StrictLoader)
    except (yaml.YAMLError, ConfigError):
        return None
    loc = tuple(int(p) if p.isdigit() else p for p in key_path.split("."))
    return _node_line(root, loc) if root is not None else None

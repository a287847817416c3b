"""YAML text -> the validated ``RunConfig``; errors name the key path (``substrates.0.smiles``) and, where the YAML
has one, the line, with a "did you mean" for a misspelt key. The text is read by ``yamlreader`` (plain decimal
numbers, no anchors or aliases, bounded size and depth)."""

from __future__ import annotations

import difflib
from typing import Any

import yaml
from pydantic import BaseModel, ValidationError

from elimscan.config.method import SolventConfig
from elimscan.config.molecules import BaseConfig
from elimscan.config.run import RunConfig
from elimscan.config.yamlreader import SEXAGESIMAL, StrictLoader, read_yaml
from elimscan.errors import ConfigError, InputProblems


#: what a block given in the wrong shape may be instead of a mapping
_SHORTHANDS: dict[Any, str] = {
    SolventConfig: "a solvent name (solvent: ethanol) or a mapping (solvent: {model: alpb, name: ethanol})",
    BaseConfig: "a base name (- KOtBu) or a mapping (- {name: ethoxide, smiles: \"CC[O-]\"})",
}


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


def _blocks_with(key: str) -> list[str]:
    """Return the top-level blocks of the config whose model has a setting of this name."""
    blocks = []
    for name, field in RunConfig.model_fields.items():
        annotation = field.annotation
        if isinstance(annotation, type) and issubclass(annotation, BaseModel) and key in annotation.model_fields:
            blocks.append(name)
    return blocks


def _duplicate_keys(node: yaml.Node | None, path: str = "") -> list[ConfigError]:
    """Return a ConfigError for every key a YAML mapping repeats (PyYAML would silently keep the last)."""
    found: list[ConfigError] = []
    if isinstance(node, yaml.MappingNode):
        seen: dict[str, int] = {}
        for key, value in node.value:
            name = str(key.value)
            if name in seen:
                found.append(ConfigError(f"key '{name}' appears twice (first on line {seen[name]})",
                                         key_path=f"{path}{name}", line=key.start_mark.line + 1))
            else:
                seen[name] = key.start_mark.line + 1
            found += _duplicate_keys(value, f"{path}{name}.")
    elif isinstance(node, yaml.SequenceNode):
        for i, item in enumerate(node.value):
            found += _duplicate_keys(item, f"{path}{i}.")
    return found


def _node_at(root: yaml.Node | None, loc: tuple[Any, ...]) -> yaml.Node | None:
    """Return the YAML node at a location (mapping keys and list indices), or None when it is not there."""
    node = root
    for part in loc:
        if isinstance(node, yaml.MappingNode):
            node = next((v for k, v in node.value if k.value == part), None)
        elif isinstance(node, yaml.SequenceNode) and isinstance(part, int) and part < len(node.value):
            node = node.value[part]
        else:
            return None
    return node


def comma_split_name(root: yaml.Node | None, loc: tuple[Any, ...]) -> tuple[str, str] | None:
    """Return (key, whole text) when an unknown key looks like the tail of a value cut at a comma, else None.

    Inside ``{...}`` a comma ends a value, so ``{name: 2,3-dibromobutane}`` reads as ``name: 2`` and a key
    ``3-dibromobutane`` with no value: the key before it and the text it would have held are returned.
    """
    parent = _node_at(root, loc[:-1])
    if not isinstance(parent, yaml.MappingNode) or not parent.flow_style:
        return None
    pairs = parent.value
    for i, (key, value) in enumerate(pairs):
        if key.value != loc[-1]:
            continue
        no_value = isinstance(value, yaml.ScalarNode) and value.value == "" and value.tag.endswith(":null")
        if i == 0 or not no_value:
            return None
        before_key, before = pairs[i - 1]
        if not isinstance(before, yaml.ScalarNode) or before.value == "":
            return None
        return str(before_key.value), f"{before.value},{key.value}"
    return None


def _problem(error: dict[str, Any], root: yaml.Node | None) -> ConfigError:
    """Return a ConfigError for one pydantic error, with key path, line and suggestion."""
    loc = tuple(error["loc"])
    key_path = ".".join(str(p) for p in loc) or "(top level)"
    message = error["msg"].removeprefix("Value error, ")
    if error["type"] == "extra_forbidden":
        line = _key_line(root, loc)
        split = comma_split_name(root, loc)
        if split is not None:
            key, whole = split
            return ConfigError(f"unknown key '{loc[-1]}': inside {{...}} a comma ends a value, so '{key}: {whole}' "
                               f"was cut at the comma; put the text in quotes: {key}: \"{whole}\"",
                               key_path=key_path, line=line)
        model = _model_at(loc)
        known = sorted(model.model_fields) if model is not None else []
        blocks = _blocks_with(str(loc[-1])) if len(loc) == 1 else []
        if blocks:  # a setting of a block written at the top level ('solvent: ethanol')
            return ConfigError(f"unknown key '{loc[-1]}' at the top level: it belongs in the '{blocks[0]}' block "
                               f"({blocks[0]}: {{{loc[-1]}: ...}})", key_path=key_path, line=line)
        close = difflib.get_close_matches(str(loc[-1]), known, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        return ConfigError(f"unknown key '{loc[-1]}'{hint} (allowed here: {', '.join(known)})", key_path=key_path,
                           line=line)
    line = _node_line(root, loc)
    if error["type"] == "missing":
        message = f"required key '{loc[-1]}' is missing"
    elif error["type"] in ("model_type", "model_attributes_type", "dict_type"):
        got = error.get("input")
        model = _model_at(loc + ("",))
        message = (f"expected {_SHORTHANDS.get(model, 'a mapping of keys (key: value lines, or {key: value, ...})')}"
                   + (f", got {got!r}" if not isinstance(got, (dict, list)) else ", got a list"))
    elif error["type"] in ("tuple_type", "list_type"):
        got = error.get("input")
        message = "expected a list ([a, b], or lines starting with '- ')" + (
            f", got {got!r}" if not isinstance(got, (dict, list)) else ", got a mapping")
    elif "input" in error and not isinstance(error["input"], (dict, list)):
        if not (error["type"] == "value_error" and f"{error['input']}" in message):  # said already
            message = f"{message} (got {error['input']!r})"
        if isinstance(error["input"], str) and SEXAGESIMAL.match(error["input"].strip()):
            guess = error["input"].strip().replace(":", ".", 1) if error["input"].count(":") == 1 else None
            message += (": numbers are read as plain decimals (YAML 1.1 would read this as base 60)"
                        + (f"; did you mean {guess}?" if guess else ""))
    return ConfigError(message, key_path=key_path, line=line)


def _translate(err: ValidationError, root: yaml.Node | None) -> list[ConfigError]:
    """Return one ConfigError per problem of a pydantic error, in file order, consequences left out."""
    errors = err.errors()
    cut = {tuple(e["loc"])[:-1] + (split[0],) for e in errors if e["type"] == "extra_forbidden"
           for split in [comma_split_name(root, tuple(e["loc"]))] if split is not None}
    kept: list[dict[str, Any]] = []
    for error in errors:
        loc = tuple(error["loc"])
        if loc in cut:  # the value cut at a comma: the unknown key's message says it all
            continue
        # an error on a parent of another location is its consequence (an emptied list); a union's branches
        # report one location twice
        if any(len(loc) < len(tuple(o["loc"])) and tuple(o["loc"])[: len(loc)] == loc for o in errors):
            continue
        if any(tuple(o["loc"]) == loc for o in kept):
            continue
        if error["type"] == "missing" and any(  # a misspelt required key: "did you mean" on the unknown one says it
                o["type"] == "extra_forbidden" and tuple(o["loc"])[:-1] == loc[:-1]
                and difflib.get_close_matches(str(tuple(o["loc"])[-1]), [str(loc[-1])], n=1) for o in errors):
            continue
        kept.append(error)
    problems = [_problem(error, root) for error in kept]
    return sorted(problems, key=lambda p: (p.line is None, p.line or 0))


def config_problems(text: str, source: str = "<config>") -> tuple[RunConfig | None, list[ConfigError], Any]:
    """Return (the validated RunConfig or None, every problem found, the plain YAML data) for YAML text.

    A YAML syntax error, an empty config or one that is not a mapping raises ConfigError at once (nothing more
    can be read); every other problem is returned, each with its key path and line.
    """
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
    problems = _duplicate_keys(root)
    try:
        config = RunConfig.model_validate(data)
    except ValidationError as err:
        return None, sorted(problems + _translate(err, root), key=lambda p: (p.line is None, p.line or 0)), data
    return (None if problems else config), problems, data


def parse_config(text: str, source: str = "<config>") -> RunConfig:
    """Return the validated RunConfig for YAML text; raise ConfigError (one problem) or InputProblems (several)."""
    config, problems, _ = config_problems(text, source)
    if len(problems) == 1:
        raise problems[0]
    if problems:
        raise InputProblems(problems)
    return config


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

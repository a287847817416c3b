"""YAML text -> its node tree and plain data, read strictly: numbers are plain decimals, switches true/false.

PyYAML implements YAML 1.1, which reads ``298:15`` as a base-60 number (17,895), ``010`` as octal, ``no`` as
false and ``2024-01-01`` as a date. A config read that way silently computes something else than was typed,
so this reader resolves plain scalars as YAML 1.2's core schema does: decimal integers, decimal floats (with an
optional exponent, and ``.inf``/``.nan``, which the models then refuse), ``true``/``false``, ``null``; every
other plain scalar is text (a number field then names it as not a valid number).

Anchors and aliases (``&a``, ``*a``) are refused: a few hundred bytes of nested aliases expand to billions of
nodes (an "alias bomb"), and a config never needs them. The text's size and nesting depth are bounded too.
Errors are ``ConfigError`` naming the YAML line.
"""

from __future__ import annotations

import re
from typing import Any

import yaml
from yaml.constructor import ConstructorError

from elimscan.errors import ConfigError

#: a config file may have at most this many bytes (a real one has a few kilobytes; 1 MB keeps parsing under seconds)
MAX_CONFIG_BYTES = 1_000_000
#: mappings and lists may nest at most this deep (the deepest key of a config, series.N.members.N.sigma, is at 5)
MAX_CONFIG_DEPTH = 20

_INT = re.compile(r"^[-+]?[0-9]+$")
_FLOAT = re.compile(r"^(?:[-+]?(?:\.[0-9]+|[0-9]+(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$")
_BOOL = re.compile(r"^(?:true|True|TRUE|false|False|FALSE)$")
_NULL = re.compile(r"^(?:~|null|Null|NULL|)$")
#: what YAML 1.1 would have read as a base-60 number (for the hint in an error message)
SEXAGESIMAL = re.compile(r"^[-+]?[0-9][0-9_]*(?::[0-5]?[0-9])+(?:\.[0-9_]*)?$")


class StrictLoader(yaml.SafeLoader):
    """PyYAML's safe loader with YAML 1.2 core scalars, anchors and aliases refused and a bounded nesting depth."""

    yaml_implicit_resolvers: dict = {}

    def __init__(self, stream: str):
        super().__init__(stream)
        self._depth = 0

    def compose_node(self, parent, index):
        """Return the next node; raise ConfigError on an anchor, an alias or nesting deeper than MAX_CONFIG_DEPTH."""
        event = self.peek_event()
        line = event.start_mark.line + 1
        if isinstance(event, yaml.AliasEvent) or getattr(event, "anchor", None) is not None:
            raise ConfigError("YAML anchors and aliases ('&name', '*name') are not accepted in a config: write each "
                              "value out where it is used", line=line)
        if isinstance(event, (yaml.MappingStartEvent, yaml.SequenceStartEvent)):
            self._depth += 1
            if self._depth > MAX_CONFIG_DEPTH:
                raise ConfigError(f"the config nests mappings and lists more than {MAX_CONFIG_DEPTH} deep", line=line)
            try:
                return super().compose_node(parent, index)
            finally:
                self._depth -= 1
        return super().compose_node(parent, index)

    def construct_yaml_int(self, node):
        """Return a plain decimal integer (YAML 1.1's octal, hex and base-60 forms never reach here)."""
        value = self.construct_scalar(node)
        try:
            return int(value, 10)
        except ValueError as err:
            raise ConstructorError(None, None, f"'{value}' is not a decimal whole number", node.start_mark) from err

    def construct_yaml_float(self, node):
        """Return a decimal float; '.inf' and '.nan' as Python's (the config models refuse them)."""
        value = self.construct_scalar(node)
        lowered = value.lower().lstrip("+")
        special = {".inf": float("inf"), "-.inf": float("-inf"), ".nan": float("nan")}
        if lowered in special:
            return special[lowered]
        try:
            return float(value)
        except ValueError as err:
            raise ConstructorError(None, None, f"'{value}' is not a decimal number", node.start_mark) from err

    def construct_yaml_bool(self, node):
        """Return true or false (YAML 1.1's yes/no/on/off stay text)."""
        value = self.construct_scalar(node)
        if not _BOOL.match(value):
            raise ConstructorError(None, None, f"'{value}' is not true or false", node.start_mark)
        return value.lower() == "true"


StrictLoader.add_constructor("tag:yaml.org,2002:int", StrictLoader.construct_yaml_int)
StrictLoader.add_constructor("tag:yaml.org,2002:float", StrictLoader.construct_yaml_float)
StrictLoader.add_constructor("tag:yaml.org,2002:bool", StrictLoader.construct_yaml_bool)
StrictLoader.add_implicit_resolver("tag:yaml.org,2002:bool", _BOOL, list("tTfF"))
StrictLoader.add_implicit_resolver("tag:yaml.org,2002:int", _INT, list("-+0123456789"))
StrictLoader.add_implicit_resolver("tag:yaml.org,2002:float", _FLOAT, list("-+0123456789."))
StrictLoader.add_implicit_resolver("tag:yaml.org,2002:null", _NULL, ["~", "n", "N", ""])


def read_yaml(text: str) -> tuple[yaml.Node | None, Any]:
    """Return the node tree and the plain data of one YAML document; raise ConfigError (bounds) or yaml.YAMLError."""
    size = len(text.encode("utf-8", "surrogatepass"))
    if size > MAX_CONFIG_BYTES:
        raise ConfigError(f"the config has {size:,} bytes; at most {MAX_CONFIG_BYTES:,} are read (a config lists "
                          "settings and a few molecules: give many substrates in a 'substrates_file')")
    loader = StrictLoader(text)
    try:
        root = loader.get_single_node()
        data = loader.construct_document(root) if root is not None else None
    finally:
        loader.dispose()
    return root, data

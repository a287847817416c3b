"""Names that become file and folder names in an output folder: their file-name-safe form, its length, clashes.

One rule for ``run``, ``plan`` and ``batch``: two names whose safe forms coincide would share one folder of
files, so they are refused wherever names are read (``RunConfig``, the batch plan).
"""

from __future__ import annotations

from collections.abc import Iterable

#: the file-name-safe form of a substrate or base name may have at most this many bytes (UTF-8): a job's folder
#: and plot names join a substrate's and a base's name, and most file systems allow 255 bytes per name
MAX_NAME_BYTES = 100
#: characters kept in file names besides letters and digits; every other character becomes '_'
SAFE_PUNCTUATION = "-_."


def safe_name(name: str) -> str:
    """Return the file-name-safe form of a user-given name (letters, digits and '-_.' kept, others '_'; never '.' or '..')."""
    safe = "".join(c if c.isalnum() or c in SAFE_PUNCTUATION else "_" for c in name)
    return "_" * len(safe) if set(safe) <= {"."} else safe


def name_length_problem(name: str) -> str | None:
    """Return why a name is too long to become a file name (its safe form over MAX_NAME_BYTES bytes), or None."""
    size = len(safe_name(name).encode("utf-8"))
    if size <= MAX_NAME_BYTES:
        return None
    return (f"name '{name[:40]}...' has {size} bytes as a file name; at most {MAX_NAME_BYTES} (names become folder "
            "and file names in the output folder)")


def clashing_names(names: Iterable[str]) -> tuple[str, str] | None:
    """Return the first two different names with the same file-name-safe form (they would share files), or None."""
    seen: dict[str, str] = {}
    for name in names:
        key = safe_name(name)
        if key in seen and seen[key] != name:
            return seen[key], name
        seen.setdefault(key, name)
    return None


def clash_message(first: str, second: str) -> str:
    """Return the error text for two names that would share one file name."""
    return (f"names '{first}' and '{second}' both become the file name '{safe_name(first)}' in the output folder: "
            f"rename one (letters, digits and '{SAFE_PUNCTUATION}' are kept, every other character becomes '_')")

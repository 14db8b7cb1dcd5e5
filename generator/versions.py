"""What made a result: the generator's own source and the versions of the libraries it computes
and renders with. Part of every cache key, so a changed library or generator recomputes.
"""

from __future__ import annotations

import functools
import hashlib
from importlib import metadata
from pathlib import Path

from generator import __version__

COMPUTING_LIBRARIES = ("sympy", "python-flint", "mpmath")


def library_versions(names: tuple[str, ...] = COMPUTING_LIBRARIES) -> str:
    return ";".join(f"{n}={_version(n)}" for n in names)


@functools.cache
def _version(name: str) -> str:
    """Installed version of a library (read once per process: reading package metadata is
    slow, and every cache key asks)."""
    try:
        return metadata.version(name)
    except metadata.PackageNotFoundError:
        return "absent"


@functools.cache
def generator_fingerprint() -> str:
    """Hash of the generator's own source: a code change invalidates results even when the
    version number has not been bumped yet (as during development)."""
    digest = hashlib.sha256(__version__.encode())
    package = Path(__file__).parent
    for path in sorted(package.rglob("*.py")):
        digest.update(path.relative_to(package).as_posix().encode() + b"\0" + path.read_bytes())
    return digest.hexdigest()

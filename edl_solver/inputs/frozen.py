"""Setting a field of a frozen dataclass while it validates itself in ``__post_init__``."""

from __future__ import annotations


def assign(obj: object, name: str, value: object) -> None:
    """Store a validated (converted) value on a frozen dataclass instance."""
    object.__setattr__(obj, name, value)

"""navred: celestial-navigation sight reduction from first principles.

An aid to navigation, not a sole means: verify against the official nautical
almanac and publications, keep a DR plot, and defer to local regulations, the
master and licensed practice.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "reduce_sights"]


def __getattr__(name: str):
    # the DataFrame pipeline lives at the edge (pandas); import it only when asked for
    if name == "reduce_sights":
        from .sights import reduce_sights

        return reduce_sights
    raise AttributeError(f"module 'navred' has no attribute {name!r}")

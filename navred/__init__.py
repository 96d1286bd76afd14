"""navred: celestial-navigation sight reduction from first principles.

An aid to navigation, not a sole means: verify against the official nautical
almanac and publications, keep a DR plot, and defer to local regulations, the
master and licensed practice.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__"]

"""navred: celestial-navigation sight reduction from first principles.

An aid to navigation, not a sole means: verify against the official nautical
almanac and publications, keep a DR plot, and defer to local regulations, the
master and licensed practice.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "body_positions", "fix_position", "mark_workings", "process_log", "read_sight_log",
           "reduce_sights", "sun_events"]

_FRONT = {"body_positions": "jobs.frames", "fix_position": "jobs.frames", "read_sight_log": "io.logbook",
          "reduce_sights": "jobs.sights", "sun_events": "plan", "process_log": "jobs.voyage",
          "mark_workings": "jobs.workings"}


def __getattr__(name: str):
    # the few functions a user calls, imported only when asked for (pandas stays unloaded until then)
    if name in _FRONT:
        import importlib

        return getattr(importlib.import_module(f".{_FRONT[name]}", __name__), name)
    raise AttributeError(f"module 'navred' has no attribute {name!r}")

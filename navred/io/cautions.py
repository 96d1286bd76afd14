"""The safety caution in one line, the same wherever navred shows a position, a course or a time.

Edge code: the console (once per run, on stderr), the printed pages (every page's heading), the
workbook's printed footer, and the metadata of the GPX and GeoJSON files all carry these words.
"""

from __future__ import annotations

#: One line: what navred is, and what decides.
CAUTION = ("CAUTION: navred is an aid to navigation, not a sole means: check against the official almanac and "
           "publications, keep a DR plot, and defer to the master, local regulations and licensed practice.")

#: Beside a route's legs (navred route): a line drawn on the globe knows nothing of the sea it crosses.
ROUTE_CAUTION = ("Before steering any leg, check it on the chart for land, shoals and other dangers, traffic "
                 "separation schemes and restricted areas: these lines are drawn on the ellipsoid alone.")

__all__ = ["CAUTION", "ROUTE_CAUTION"]

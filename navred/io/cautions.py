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



def gpx_with_caution(root, namespace: str) -> None:
    """Put the caution first in a GPX 1.1 document, as its metadata's description (the schema's first element)."""
    import xml.etree.ElementTree as ET

    metadata = ET.Element(f"{{{namespace}}}metadata")
    ET.SubElement(metadata, f"{{{namespace}}}desc").text = CAUTION
    root.insert(0, metadata)


def geojson_with_caution(collection: dict) -> dict:
    """A GeoJSON FeatureCollection with the caution as a foreign member (RFC 7946, section 6.1)."""
    return {**collection, "navred": {"caution": CAUTION}}


__all__ = ["CAUTION", "ROUTE_CAUTION", "gpx_with_caution", "geojson_with_caution"]

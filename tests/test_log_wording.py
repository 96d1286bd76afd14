"""The words a navigator meets reading a log: a UTC column holding a time and no date says what is missing and
both ways to give it; a planet that is not navigational is named so, and only near spellings are suggested; the
index error's accepted forms say what on and off the arc mean and the sign each gets ('2.0 off arc' is read);
zone time is called zone time; a long star name keeps its own column in the console table. The logs are written
by hand."""

from __future__ import annotations

import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.corrections import parse_index_error_arcmin
from navred.errors import NavredError
from navred.io.logbook import read_sight_log
from navred.stars import canonical_body_name

runner = CliRunner()

HEADER = "UTC,Body,Limb,Hs,IE,Eye height (m),DR lat,DR lon"
ROW = "2026-12-04T22:15:00Z,Sun,LL,81 51.4,1.2 off,3.0,17 30.0 S,149 30.0 W"


def log(tmp_path, rows, header=HEADER):
    path = tmp_path / "log.csv"
    path.write_text("\n".join([header, *rows]) + "\n", encoding="utf-8")
    return path


def refusal(path, row=2) -> str:
    sight_log = read_sight_log(path)
    return sight_log.table.loc[sight_log.table.row == row, "read_problem"].iloc[0]


@pytest.mark.parametrize(("written", "clock"), [("22:15:00", "22:15:00"), ("22:15", "22:15:00"),
                                                ("221500", "22:15:00"), ("22:15Z", "22:15:00")])
@pytest.mark.parametrize("header", ["UTC", "GMT"])
def test_a_utc_time_with_no_date_says_what_is_missing_and_how_to_give_it(tmp_path, written, clock, header):
    path = log(tmp_path, [ROW.replace("2026-12-04T22:15:00Z", written)], HEADER.replace("UTC", header))
    why = refusal(path)
    assert why.startswith(f"{header}: '{written}' is a time of day with no date: a UTC (GMT) cell is the whole "
                          "instant, date and time")
    assert f"YYYY-MM-DDT{clock}Z (2026-12-04T{clock}Z for 4 December 2026)" in why
    assert "a 'Zone time' column beside a 'Date' column and a 'ZD' column of 0" in why


def test_the_zone_time_way_the_message_offers_reads_the_same_instant(tmp_path):
    """ZT + ZD = UTC with ZD 0: the zone time is UTC  # common practice (zone time)"""
    zoned = log(tmp_path, ["2026-12-04,22:15:00,0,Sun,LL,81 51.4,1.2 off,3.0,17 30.0 S,149 30.0 W"],
                "Date,Zone time,ZD,Body,Limb,Hs,IE,Eye height (m),DR lat,DR lon")
    assert str(read_sight_log(zoned).table.sight_utc.iloc[0])[:19] == "2026-12-04 22:15:00"


@pytest.mark.parametrize("planet", ["Mercury", "Uranus", "Neptune"])
def test_a_planet_that_is_not_navigational_is_named_so(planet):
    with pytest.raises(NavredError) as caught:
        canonical_body_name(planet)
    text = str(caught.value)
    assert f"{planet} is not one of the navigational planets (Venus, Mars, Jupiter, Saturn)" in text
    assert "closest" not in text and "Arcturus" not in text


@pytest.mark.parametrize(("written", "suggested"), [("Sirus", "Sirius"), ("Sattern", "Saturn"), ("Jupitr", "Jupiter"),
                                                    ("Acturus", "Arcturus")])
def test_a_misspelt_body_suggests_only_near_spellings(written, suggested):
    with pytest.raises(NavredError, match=f"closest: {suggested}"):
        canonical_body_name(written)


def test_a_name_like_no_body_suggests_none():
    with pytest.raises(NavredError, match="no name navred knows is spelt like it; see 'navred bodies'"):
        canonical_body_name("Xyzzy")


def test_the_console_shows_mercury_as_not_navigational(tmp_path):
    out = runner.invoke(app, ["reduce", str(log(tmp_path, [ROW.replace(",Sun,LL,", ",Mercury,,")]))]).stdout
    assert "unknown body 'Mercury': Mercury is not one of the navigational planets" in out


@pytest.mark.parametrize(("written", "arcmin"), [("2.0 off arc", -2.0), ("2.0 on arc", 2.0), ("2.0′ off the arc", -2.0),
                                                 ("2 ON THE ARC", 2.0)])
def test_on_or_off_the_arc_is_read_with_its_sign(written, arcmin):
    # on the arc: subtracted, + in navred's sign; off the arc: added, −  # common practice (Bowditch, index error)
    assert parse_index_error_arcmin(written, None) == arcmin


def test_an_unreadable_index_error_says_what_is_accepted_and_what_on_and_off_mean():
    with pytest.raises(NavredError) as caught:
        parse_index_error_arcmin("lots", None)
    text = str(caught.value)
    assert "accepted: the arcminutes with on or off, '2.1 on' or '1.5 off'" in text
    assert "On the arc: with the horizon brought in line the index reads above zero" in text
    assert "error is subtracted (it is + in navred's sign, on the arc positive)" in text
    assert "off the arc: it reads below zero" in text and "added (−)" in text
    assert "A bare number (2.1, -1.5) only under a header that states the sign, 'IE (on +)' or 'IE (off +)'" in text
    assert "arcminutes on the arc positive (2.1, -1.5)" not in text  # (a bare number was said to be accepted)


def test_a_long_star_name_keeps_its_own_column(tmp_path):
    rows = [ROW, ROW.replace(",Sun,LL,81 51.4,", ",Rigil Kentaurus,,31 51.4,")]
    out = runner.invoke(app, ["reduce", str(log(tmp_path, rows))]).stdout
    lines = out.splitlines()
    star = next(x for x in lines if "Rigil Kentaurus" in x)
    assert "Rigil Kentaurus 2026-12-04 22:15:00" in star
    # every row's UTC starts in the header's UTC column
    at = lines[0].index("UTC")
    assert all(x[at:at + 10] == "2026-12-04" for x in lines[1:3])


def test_a_long_unknown_name_is_cut_in_the_table_and_quoted_whole_in_its_refusal(tmp_path):
    name = "Alpha Centauri Australis B"
    out = runner.invoke(app, ["reduce", str(log(tmp_path, [ROW, ROW.replace(",Sun,LL,", f",{name},,")]))]).stdout
    line = next(x for x in out.splitlines() if x.lstrip().startswith("3 "))
    assert "…" in line.split("2026-12-04")[0] and f"unknown body '{name}'" in line


def test_zone_time_is_called_zone_time(tmp_path):
    """One term, the log's: a utc column without a zone points to zone time, not to 'ship's time'."""
    path = log(tmp_path, [ROW.replace("2026-12-04T22:15:00Z", "2026-12-04 22:15:00")])
    notes = " ".join(read_sight_log(path).notes)
    assert "if the log holds zone time (the ship's clock), give date, zone_time and zone_description" in notes
    assert "ship's time" not in notes

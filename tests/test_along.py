"""Plot list and events along the courses (lodeline.geo.along), checked against pyproj and hand work."""

from __future__ import annotations

import json
import math
from fractions import Fraction

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pyproj import CRS, Transformer

from lodeline.geo.along import course_points, plot_list
from lodeline.geo.document import document_from_dict, dumps_document, loads_document
from lodeline.geo.errors import DocumentError
from lodeline.geo.north import convert_document
from lodeline.tui.cli import main

# Gunter's chain = 66 US survey feet = 792/39.37 m (NIST Handbook 44, Appendix C).
CHAIN = float(66 * Fraction(1200, 3937))


def _doc(courses, plots=None, **record):
    data = {
        "format_version": 1,
        "closed": False,
        "place": {"lat": 47.4783, "lon": -91.221, "height_m": 480.0},
        "record": {"reference": "true", "distance_unit": "chain", "foot": "us", **record},
        "course": courses,
    }
    if plots is not None:
        data["plots"] = plots
    return document_from_dict(data)


def _conv(doc):
    return convert_document(doc, target_date="2026-05-01", model="WMM2025")


def test_hand_worked_plot_list():
    # Course 1: 12.3 chains, plots every 5 chains, first at 2.5 chains, one at the end:
    #   2.5, 7.5, 12.3 (end) -> plots 101, 102, 103.
    # Course 2: 10 chains, no spacing -> no plots.
    # Course 3: 7 chains every 5: 2.5, 7.0 (end) -> 104, 105; on the line 24.8 and 29.3 chains.
    doc = _doc(
        [
            {"call": "N 10 E 12.3 chains", "every": "5 chains"},
            {"call": "S 80 E 10 chains"},
            {"call": "S 10 W 7 chains", "every": 5},
        ],
        plots={"start": 101, "first": "2.5 chains", "course_ends": True},
    )
    al = plot_list(_conv(doc))
    got = [(p.number, p.course, round(p.along_course_record, 9), round(p.along_line_record, 9),
            p.at_course_end) for p in al.plots]  # fmt: skip
    assert got == [
        (101, 1, 2.5, 2.5, False),
        (102, 1, 7.5, 7.5, False),
        (103, 1, 12.3, 12.3, True),
        (104, 3, 2.5, 24.8, False),
        (105, 3, 7.0, 29.3, True),
    ]
    assert al.plots[3].along_course_m == pytest.approx(2.5 * CHAIN, rel=1e-12)
    assert al.plots[3].along_line_m == pytest.approx(24.8 * CHAIN, rel=1e-12)


def test_default_plots_are_the_export_points():
    # Without [plots], the plots are the intermediate points of the export (every multiple
    # of the spacing short of the course's end), numbered 1.. across courses.
    from lodeline.geo.export import positions

    doc = _doc([{"call": "N 10 E 40 chains", "every": "5 chains"},
                {"call": "S 80 E 10 chains"},
                {"call": "S 10 W 40 chains", "every": "5 chains"}])  # fmt: skip
    conv = _conv(doc)
    al = plot_list(conv)
    pts = positions(conv).points
    assert [p.number for p in al.plots] == list(range(1, 15))
    assert len(pts) == len(al.plots)
    for plot, point in zip(al.plots, pts, strict=True):
        assert plot.course == point.course
        assert plot.along_course_m == pytest.approx(point.along_m, abs=1e-9)
        assert plot.easting == pytest.approx(point.easting, abs=1e-6)
        assert plot.lat == pytest.approx(point.lat, abs=1e-10)


def test_plot_positions_against_pyproj():
    # Each plot lies on its course's marched line at along/length of the way, and its
    # latitude/longitude is the inverse projection of its grid position (pyproj directly).
    doc = _doc([{"call": "N 10 E 40 chains", "every": "5 chains"},
                {"call": "S 80 E 10 chains", "every": "3 chains"}])  # fmt: skip
    conv = _conv(doc)
    al = plot_list(conv)
    to_wgs = Transformer.from_crs(CRS(conv.crs), CRS("EPSG:4326"), always_xy=True)
    for p in al.plots:
        c = conv.courses[p.course - 1]
        f = p.along_course_m / c.length_m
        assert p.easting == pytest.approx(c.start.easting + f * (c.end.easting - c.start.easting))
        assert p.northing == pytest.approx(
            c.start.northing + f * (c.end.northing - c.start.northing)
        )
        lon, lat = to_wgs.transform(p.easting, p.northing)
        assert (p.lat, p.lon) == pytest.approx((lat, lon), abs=1e-9)
        # grid distance from the course's start = ground chainage x combined factor
        d = math.hypot(p.easting - c.start.easting, p.northing - c.start.northing)
        # on the marched line: its grid length over its ground length is the mean factor
        assert d == pytest.approx(p.along_course_m * c.mean_combined_factor, rel=1e-6)
        assert p.bearing == c.bearing and p.azimuth == c.azimuth


def test_events_hand_worked_and_refused_beyond_the_end():
    doc = _doc(
        [
            {"call": "N 10 E 40 chains", "at": [{"distance": "12 chains", "note": "crossed a run"},
                                                 {"distance": 31.5, "note": "a blazed beech"}]},
            {"call": "S 80 E 660 ft", "at": [{"distance": 330, "note": "old wire fence"}]},
        ]
    )  # fmt: skip
    al = plot_list(_conv(doc))
    ev = [(e.number, e.course, e.note, round(e.along_course_record, 9),
           round(e.along_line_record, 9)) for e in al.events]  # fmt: skip
    # 330 ft of a 660 ft course = 5 chains (66 ft a chain), on the line 40 + 5 chains
    assert ev == [
        (1, 1, "crossed a run", 12.0, 12.0),
        (2, 1, "a blazed beech", 31.5, 31.5),
        (3, 2, "old wire fence", 5.0, 45.0),
    ]
    bad = _doc([{"call": "N 10 E 10 chains", "at": [{"distance": "12 chains"}]}])
    with pytest.raises(DocumentError) as err:
        plot_list(_conv(bad))
    assert err.value.course == 1 and err.value.field == "at.distance"


def test_event_that_does_not_read_names_course_and_key():
    with pytest.raises(DocumentError) as err:
        _doc([{"call": "N 10 E 10 chains"}, {"call": "N 10 E 3 chains", "at": [{"distance": "x"}]}])
    assert err.value.course == 2 and err.value.field == "at.distance"
    with pytest.raises(DocumentError) as err:
        _doc([{"call": "N 10 E 10 chains", "at": [{"distance": "1 chain", "where": 1}]}])
    assert err.value.course == 1 and "unknown key" in err.value.message
    with pytest.raises(DocumentError) as err:
        _doc([{"call": "N 10 E 10 chains", "every": 2}], plots={"start": -1})
    assert err.value.field == "plots.start"


def test_toml_round_trip_keeps_events_and_plots():
    doc = _doc(
        [{"call": "N 10 E 40 chains", "every": "5 chains",
          "at": [{"distance": "12 chains", "note": "a run"}]}],
        plots={"start": 7, "first": "2.5 chains", "course_ends": True},
    )  # fmt: skip
    text = dumps_document(doc)
    assert "[[course.at]]" in text and "[plots]" in text
    assert loads_document(text) == doc


def test_too_many_plots_are_refused():
    doc = _doc([{"call": "N 10 E 400 chains", "every": "0.001 links"}])
    with pytest.raises(DocumentError) as err:
        plot_list(_conv(doc))
    assert err.value.course == 1 and "more than" in err.value.message


@settings(max_examples=40, deadline=None)
@given(
    length=st.floats(min_value=0.5, max_value=80.0),
    spacing=st.floats(min_value=0.2, max_value=20.0),
    first=st.one_of(st.none(), st.floats(min_value=0.0, max_value=0.49)),
    ends=st.booleans(),
)
def test_plots_lie_on_the_course_in_order(length, spacing, first, ends):
    # a number is in record.distance_unit (chains); 0 puts a plot at the course's start
    plots = {"course_ends": ends} | ({} if first is None else {"first": round(first, 4)})
    doc = _doc([{"bearing": "N 30 E", "distance": length, "every": f"{spacing:.4f} chains"}],
               plots=plots)  # fmt: skip
    conv = _conv(doc)
    al = plot_list(conv)
    along = [p.along_course_m for p in al.plots]
    assert along == sorted(along)
    assert all(0.0 <= a <= conv.courses[0].length_m * (1 + 1e-9) for a in along)
    assert [p.number for p in al.plots] == list(range(1, len(al.plots) + 1))
    assert ends == (bool(al.plots) and al.plots[-1].at_course_end)
    e, n = course_points(conv, 1, [p.along_course_m for p in al.plots])
    assert list(e) == pytest.approx([p.easting for p in al.plots])


def test_cli_outputs_carry_plots_and_events(tmp_path, capsys):
    path = tmp_path / "line.toml"
    path.write_text(
        dumps_document(
            _doc(
                [
                    {
                        "call": "N 10 E 20 chains",
                        "every": "5 chains",
                        "at": [{"distance": "12 chains", "note": "crossed a run"}],
                    }
                ]
            )  # fmt: skip
        ),
        encoding="utf-8",
    )
    assert main(["close", str(path), "--json"]) == 0
    obj = json.loads(capsys.readouterr().out)
    assert [p["number"] for p in obj["plots"]] == [1, 2, 3]
    assert obj["events"][0]["note"] == "crossed a run"
    assert obj["events"][0]["along_course_record"] == pytest.approx(12.0)
    assert main(["convert", str(path), "--json", "--target-date", "2026-05-01"]) == 0
    obj = json.loads(capsys.readouterr().out)
    assert obj["plots"][2]["along_line_m"] == pytest.approx(15 * CHAIN)
    assert obj["courses"][0]["length_record_text"] == "20 ch 0 lk"
    out = tmp_path / "line.csv"
    geo = tmp_path / "line.geojson"
    assert main(["export", str(path), "--csv", str(out), "--geojson", str(geo)]) == 0
    rows = (tmp_path / "line-plots.csv").read_text(encoding="utf-8").splitlines()
    assert rows[0].startswith("plot,course,along_course_m") and len(rows) == 4
    events = (tmp_path / "line-events.csv").read_text(encoding="utf-8").splitlines()
    assert "crossed a run" in events[1]
    fc = json.loads(geo.read_text(encoding="utf-8"))
    kinds = [f["properties"]["kind"] for f in fc["features"]]
    # the plots are the export's intermediate points, numbered as the plot list numbers them
    assert kinds.count("point") == 3 and kinds.count("event") == 1
    plots = [f["properties"]["index"] for f in fc["features"] if f["properties"]["kind"] == "point"]
    assert plots == [1, 2, 3]
    bad = tmp_path / "bad.toml"
    bad.write_text(
        dumps_document(_doc([{"call": "N 10 E 2 chains", "at": [{"distance": "3 chains"}]}])),
        encoding="utf-8",
    )
    assert main(["close", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "course 1" in err and "at.distance" in err and "Traceback" not in err


def test_events_written_in_a_call():
    from lodeline.geo.along import split_call_events

    # The form of the field notes: events between the bearing and the course's distance.
    text = "N 10 E, at 12 chains a run, at 31.50 a blazed beech, 40 chains to a stake"
    clean, events = split_call_events(text, foot="us")
    assert clean == "N 10 E, 40 chains to a stake"
    assert events == (("12 chains", "a run"), ("31.50", "a blazed beech"))
    # words after the course's distance stay its note; a part that is no distance ends them
    for kept in ("N 10 E 40 chains to a stake, at 2 rods from the brook",
                 "N 10 E, 40 chains to a stake, at 2 rods from the brook",
                 "N 10 E 40 chains, at 12 chains a run, to a stake",
                 "N 10 E, at the fence, 40 chains"):  # fmt: skip
        assert split_call_events(kept, foot="us") == (kept, ())
    doc = _doc([{"call": text}])
    conv = _conv(doc)
    assert conv.courses[0].length_value == 40.0
    assert conv.courses[0].recorded.call_note == "to a stake"
    al = plot_list(conv)
    # a bare 31.50 is in the unit of the course's distance (chains)
    assert [(e.note, round(e.along_course_record, 9)) for e in al.events] == [
        ("a run", 12.0),
        ("a blazed beech", 31.5),
    ]
    assert al.events[1].along_course_m == pytest.approx(31.5 * CHAIN)


@settings(max_examples=200, deadline=None)
@given(st.text(alphabet="NSEW 0123456789.,at chains rods°'", max_size=60))
def test_split_call_events_never_raises_and_keeps_calls_without_events(text):
    from lodeline.geo.along import split_call_events

    clean, events = split_call_events(text, foot="us")
    if not events:
        assert clean == text
    else:
        assert len(clean) < len(text)


_VALUES = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-5, 10**10),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=20),
    st.sampled_from(["12 chains", "0 ch", "-3 rods", "1e400 ft", "5 varas", "3 ch 20 lk"]),
)


@settings(max_examples=150, deadline=None)
@given(
    event=st.dictionaries(st.sampled_from(["distance", "note", "where"]), _VALUES, max_size=3),
    plots=st.dictionaries(st.sampled_from(["start", "first", "course_ends", "x"]), _VALUES,
                          max_size=3),
)  # fmt: skip
def test_events_and_plots_keys_fuzzed_give_document_errors_only(event, plots):
    # Whatever is written under [[course.at]] and [plots]: a DocumentError naming the key,
    # or a list whose events lie on the course.
    data = {
        "format_version": 1,
        "place": {"lat": 47.4783, "lon": -91.221},
        "record": {"reference": "true", "distance_unit": "chain", "foot": "us"},
        "plots": plots,
        "course": [{"call": "N 10 E 10 chains", "every": "3 chains", "at": [event]}],
    }
    try:
        doc = document_from_dict(data)
        al = plot_list(_conv(doc))
    except DocumentError as err:
        assert err.field is not None
        return
    assert all(0.0 <= e.along_course_m <= 10 * CHAIN * (1 + 1e-9) for e in al.events)
    assert all(math.isfinite(p.lat) for p in al.plots)


def test_plot_spacing_on_the_ellipsoid_by_pyproj_geod():
    # Independent of the projection: consecutive plots 5 chains apart on the ground lie
    # 5 chains x R / (R + h) apart on the ellipsoid (ground lengths are horizontal at the
    # height of the place; R the mean Earth radius, 6,371 km, common practice), which
    # pyproj's geodesic gives from their latitudes and longitudes.
    from pyproj import Geod

    doc = _doc([{"call": "N 10 E 40 chains", "every": "5 chains"}])
    al = plot_list(_conv(doc))
    geod = Geod(ellps="WGS84")
    h, radius = 480.0, 6_371_000.0
    for a, b in zip(al.plots, al.plots[1:], strict=False):
        _, _, d = geod.inv(a.lon, a.lat, b.lon, b.lat)
        assert d == pytest.approx(5 * CHAIN * radius / (radius + h), rel=2e-5)

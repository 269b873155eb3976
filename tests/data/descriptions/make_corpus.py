"""Writes the description corpus (invented places and names) with its expected courses."""

import math
import random
from fractions import Fraction as F
from pathlib import Path

OUT = Path(__file__).parent
ONES = [
    "zero",
    "one",
    "two",
    "three",
    "four",
    "five",
    "six",
    "seven",
    "eight",
    "nine",
    "ten",
    "eleven",
    "twelve",
    "thirteen",
    "fourteen",
    "fifteen",
    "sixteen",
    "seventeen",
    "eighteen",
    "nineteen",
]
TENS = ["_", "_", "twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety"]


def words(n):
    if n < 20:
        return ONES[n]
    if n < 100:
        return TENS[n // 10] + ("-" + ONES[n % 10] if n % 10 else "")
    h, r = divmod(n, 100)
    return ONES[h] + " hundred" + (" and " + words(r) if r else "")


PLACES = [
    "Fallow",
    "Quillan",
    "Marrowby",
    "Stoneleigh",
    "Harth",
    "Dunmere",
    "Ashby Cross",
    "Wren Hollow",
    "Pellam",
    "Carrow",
    "Lisk",
    "Brenton Vale",
    "Otterbury",
    "Kestle",
    "Mallory Run",
    "Tamsin Creek",
]
NAMES = [
    "Orrin",
    "Halloway",
    "Pettibone",
    "Marchbank",
    "Quarles",
    "Tindall",
    "Vessey",
    "Ambrose",
    "Larkin",
    "Fenwick",
    "Ruddock",
    "Sallow",
    "Corbin",
    "Wethers",
    "Ibbot",
    "Yardley",
]
MONUMENTS = [
    "a white oak",
    "a stone",
    "a post",
    "a hickory",
    "a black gum",
    "a stake",
    "a chestnut stump",
    "a stone heap",
    "two sassafras",
    "a dogwood",
    "a marked poplar",
    "an iron pin",
]
MONUMENTS_TX = ["a mesquite", "a mound", "a stake in a mound", "an elm marked X", "a rock"]


def quadrant(az):
    az %= 360
    if az <= 90:
        return "N", az, "E"
    if az <= 180:
        return "S", 180 - az, "E"
    if az <= 270:
        return "S", az - 180, "W"
    return "N", 360 - az, "W"


def az_of(ns, a, ew):
    return {("N", "E"): a, ("S", "E"): 180 - a, ("S", "W"): 180 + a, ("N", "W"): (360 - a) % 360}[
        (ns, ew)
    ]


def write_bearing(az, style, rnd):
    """(text, exact azimuth as Fraction) for an azimuth rounded to the style's step."""
    if style in ("deg", "words", "cardinalish", "plain_abbrev"):
        step = F(1)
    elif style == "quarter":
        step = F(1, 4)
    elif style == "min":
        step = F(1, 60)
    elif style == "sec":
        step = F(1, 3600)
    a_exact = F(round(F(az) / step)) * step
    ns, a, ew = quadrant(a_exact)
    if a == 0 or a == 90:
        letter = {0: "North", 90: "East", 180: "South", 270: "West"}[int(a_exact % 360)]
        return (rnd.choice(["", "due "]) + letter), a_exact % 360
    if a == 45 and style == "cardinalish":
        return {45: "Northeast", 135: "Southeast", 225: "Southwest", 315: "Northwest"}[
            int(a_exact)
        ], a_exact
    if style == "deg":
        return f"{ns} {a} {ew}", a_exact
    if style == "plain_abbrev":
        return f"{ns}. {a} {ew}.", a_exact
    if style in ("words", "cardinalish"):
        full = {"N": "North", "S": "South", "E": "East", "W": "West"}
        return f"{full[ns]} {words(int(a))} degree{'s' if a != 1 else ''} {full[ew]}", a_exact
    if style == "quarter":
        whole, frac = int(a), a - int(a)
        ftxt = {F(0): "", F(1, 4): " 1/4", F(1, 2): " 1/2", F(3, 4): " 3/4"}[frac]
        return f"{ns} {whole}{ftxt} {ew}", a_exact
    d = int(a)
    m = (a - d) * 60
    if style == "min":
        return rnd.choice(
            [
                f"{ns} {d}°{int(m):02d}' {ew}",
                f"{ns} {d} deg. {int(m)} min. {ew}.",
                f"{ns} {d}-{int(m):02d} {ew}",
            ]
        ), a_exact
    mm = int(m)
    s = round((m - mm) * 60)
    return f"{ns} {d}°{mm:02d}'{s:02d}\" {ew}", a_exact


def write_distance(metres_like, unit_style, rnd):
    """(text, value in unit, unit) for a length given in the style's base unit."""
    v = metres_like
    if unit_style == "perch":
        half = F(round(v * 2), 2)
        if half.denominator == 1 and half < 100 and rnd.random() < 0.3:
            return f"{words(int(half))} perches", half, "perch"
        unit = rnd.choice(["perches", "poles", "P.", "ps.", "rods"])
        canon = {"perches": "perch", "poles": "pole", "P.": "perch", "ps.": "perch", "rods": "rod"}[
            unit
        ]
        if half.denominator == 2:
            w = int(half)
            txt = rnd.choice([f"{w} 1/2 {unit}", f"{w}½ {unit}", f"{w} and a half {unit}"])
        else:
            txt = f"{int(half)} {unit}"
        return txt, half, canon
    if unit_style == "chain":
        links = round(v * 100)
        ch, lk = divmod(links, 100)
        form = rnd.choice(["dec", "chlk", "cl", "comma", "abbr"])
        if form == "dec":
            return f"{ch}.{lk:02d} chains", F(links, 100), "chain"
        if lk == 0:
            return f"{ch} chains", F(ch), "chain"
        txt = {
            "chlk": f"{ch} chains {lk} links",
            "cl": f"{ch} c. {lk} l.",
            "comma": f"{ch} chains, {lk} links",
            "abbr": f"{ch} chs. {lk} lks.",
        }[form]
        return txt, F(links, 100), "chain"
    if unit_style == "vara":
        n = round(v)
        return rnd.choice([f"{n} varas", f"{n} vrs."]), F(n), "vara"
    if unit_style == "feet":
        form = rnd.choice(["dec", "ftin", "marks"])
        if form == "dec":
            hund = round(v * 100)
            return f"{hund // 100}.{hund % 100:02d} feet", F(hund, 100), "ft"
        inches = round(v * 12)
        ft, inch = divmod(inches, 12)
        if inch == 0:
            return f"{ft} feet", F(ft), "ft"
        return (f"{ft} ft {inch} in" if form == "ftin" else f"{ft}' {inch}\""), F(inches, 12), "ft"
    raise ValueError(unit_style)


UNIT_FT = {
    "perch": F(33, 2),
    "pole": F(33, 2),
    "rod": F(33, 2),
    "chain": F(66),
    "ft": F(1),
    "vara": F(100, 36),
}


def figure(rnd, n, size):
    """A closed polygon as n (azimuth, length) pairs: a star-shaped figure."""
    angles = sorted(rnd.uniform(0, 360) for _ in range(n))
    pts = [
        (
            size * rnd.uniform(0.6, 1.0) * math.cos(math.radians(t)),
            size * rnd.uniform(0.6, 1.0) * math.sin(math.radians(t)),
        )
        for t in angles
    ]
    out = []
    for (x0, y0), (x1, y1) in zip(pts, pts[1:] + pts[:1], strict=False):
        dx, dy = x1 - x0, y1 - y0
        out.append(((math.degrees(math.atan2(dx, dy))) % 360, math.hypot(dx, dy)))
    return out


def area_ft2(courses):
    x = y = 0.0
    pts = [(0.0, 0.0)]
    for az, L in courses:
        x += L * math.sin(math.radians(az))
        y += L * math.cos(math.radians(az))
        pts.append((x, y))
    s = sum(a[0] * b[1] - b[0] * a[1] for a, b in zip(pts, pts[1:], strict=False))
    return abs(s) / 2


ERAS = [
    # name, unit style, bearing styles, years, size in ft, lat/lon, foot/vara
    (
        "colonial",
        "perch",
        ["deg", "quarter", "words", "plain_abbrev"],
        (1720, 1799),
        1500,
        (39.2, -77.9),
    ),
    (
        "chains",
        "chain",
        ["min", "deg", "quarter", "cardinalish"],
        (1800, 1899),
        2500,
        (41.1, -80.3),
    ),
    ("varas", "vara", ["min", "deg"], (1830, 1890), 6000, (30.1, -97.8)),
    ("feet", "feet", ["sec", "min"], (1905, 1975), 600, (35.2, -85.1)),
    ("plss", "chain", ["plss"], (1820, 1880), 2640, (43.2, -90.4)),
]


def plss(rnd, k):
    """A section-line description: cardinal courses along the lines, chains."""
    sec = rnd.randint(1, 36)
    a = rnd.choice([20, 40])
    b = rnd.choice([10, 20, 40])
    corner = rnd.choice(["northwest", "southwest"])
    if corner == "northwest":
        seq = [
            (90, a, "East along the north line of said section"),
            (180, b, "South"),
            (270, a, "West"),
            (0, b, "North along the west line of said section"),
        ]
    else:
        seq = [
            (0, b, "North along the section line"),
            (90, a, "East"),
            (180, b, "South"),
            (270, a, "West along the south line of said section"),
        ]
    return sec, corner, seq, a, b


def make(idx, era, rnd):
    name, unit_style, bstyles, years, size, (lat, lon) = era
    place = rnd.choice(PLACES)
    owner = rnd.choice(NAMES)
    other = rnd.choice([n for n in NAMES if n != owner])
    year = rnd.randint(*years)
    exp = {
        "lat": round(lat + rnd.uniform(-0.5, 0.5), 4),
        "lon": round(lon + rnd.uniform(-0.5, 0.5), 4),
        "courses": [],
    }
    seps = rnd.choice(
        [", thence ", "; thence ", ";\nthence ", ", and thence ", "; running thence ", "\nthence "]
    )
    if name == "plss":
        sec, corner, seq, a, b = plss(rnd, idx)
        head = f"A tract in Section {sec}, {place} Township: Commencing at the {corner} corner of Section {sec}"
        parts = []
        for n, (az, ch, lead) in enumerate(seq):
            chtxt = f"{ch}.00 chains" if rnd.random() < 0.5 else f"{ch} chains"
            end = (
                " to the place of beginning"
                if n == len(seq) - 1
                else rnd.choice(["", " to a quarter-section post", " to a stake"])
            )
            parts.append(f"{lead} {chtxt}{end}")
            exp["courses"].append({"azimuth": float(az), "value": float(ch), "unit": "chain"})
        acres = a * b / 10
        text = head + seps + seps.join(parts) + f", containing {acres:g} acres, more or less."
        day = rnd.randint(10, 28)
        text += f" Bearings by the true meridian; surveyed May {day}, {year}."
        exp.update(
            closed=True, reference="true", area_acres=acres, date=f"{year}-05-{day}", unit=None
        )
        exp["beginning_starts"] = "Commencing at the"
        return text, exp, {"foot": "us"}
    n = rnd.randint(3, 7) if idx % 9 else rnd.randint(8, 14)
    courses = figure(rnd, n, size)
    parts = []
    for c, (az, L) in enumerate(courses):
        style = rnd.choice(bstyles)
        if c == 1 and rnd.random() < 0.3:
            btxt, a_exact = write_bearing(0 if rnd.random() < 0.5 else 90, style, rnd)
        else:
            btxt, a_exact = write_bearing(az, style, rnd)
        base = {"perch": 16.5, "chain": 66.0, "vara": 100 / 36, "feet": 1.0}[unit_style]
        dtxt, value, unit = write_distance(L / base, unit_style, rnd)
        last = c == len(courses) - 1
        mon = rnd.choice(MONUMENTS_TX if unit_style == "vara" else MONUMENTS)
        end = (
            rnd.choice([" to the place of beginning", " to the beginning"])
            if last
            else (f" to {mon}" if rnd.random() < 0.8 else "")
        )
        lead = ""
        if rnd.random() < 0.15 and not last:
            lead = rnd.choice(
                [f"with the line of the {other} tract ", "along the road ", f"with {other}'s line "]
            )
        mid = ""
        if (
            not lead
            and rnd.random() < 0.1
            and btxt.split()[0] in ("North", "South", "East", "West", "due")
        ):
            mid = " along the fence"
        parts.append(f"{lead}{btxt}{mid} {dtxt}{end}")
        note = ", ".join(p for p in [lead.strip(), mid.strip(), end.strip()] if p)
        exp["courses"].append(
            {"azimuth": float(a_exact % 360), "value": float(value), "unit": unit, "note": note}
        )
    area_acres = (
        area_ft2([(c["azimuth"], c["value"] * float(UNIT_FT[c["unit"]])) for c in exp["courses"]])
        / 43560
    )
    stated = round(area_acres, 1 if area_acres < 20 else 0)
    beginning = f"Beginning at {rnd.choice(MONUMENTS_TX if unit_style == 'vara' else MONUMENTS)} on the {rnd.choice(['east', 'west', 'north', 'south'])} side of {rnd.choice(['the branch', 'the road', 'Pike Run', 'the lane'])}, corner of {other}'s land"
    pre = rnd.choice(
        [
            "",
            f"All that tract of land in {place}, bounded and described as follows: ",
            f"A certain parcel in {place} Township. ",
        ]
    )
    text = pre + beginning + seps + seps.join(parts)
    area_txt = (
        f"{stated:g} acres"
        if rnd.random() < 0.8
        else f"{words(int(stated))} acres"
        if stated == int(stated) and stated < 100
        else f"{stated:g} acres"
    )
    text += f", containing {area_txt}, more or less."
    exp.update(closed=True, area_acres=stated, unit=None)
    opts = {"foot": "us"}
    # before 1900 the shipped field model does not reach: such deeds state the variation
    dec = rnd.choice(([None] if year >= 1900 else []) + [1.5, 2, 2.25, 3, 0.75, 4.5])
    if unit_style == "vara":
        if rnd.random() < 0.5:
            text += " The distances are given in Texas varas."
            exp["vara_inches"] = "texas"
        else:
            opts["vara_inches"] = "texas"
    if unit_style == "feet":
        exp["date"] = f"{year}-0{rnd.randint(1, 9)}-1{rnd.randint(0, 9)}"
        text += f" Surveyed {exp['date']}."
    elif rnd.random() < 0.5:
        text += f" Bearings by the magnetic meridian of {year}."
        exp["date"] = str(year)
        exp["reference"] = "magnetic"
    else:
        exp["date"] = None
        opts["date"] = f"{year}-06-01"
    if dec is not None and unit_style != "feet":
        side = rnd.choice(["W", "E"])
        dtext = {
            1.5: "1 1/2°",
            2: "2°",
            2.25: "2°15'",
            3: "three degrees",
            0.75: "45'",
            4.5: "4°30'",
        }[dec]
        if dec == 0.75:
            dtext = "0°45'"
        text += f" The needle then varying {dtext} {side if rnd.random() < 0.5 else {'W': 'West', 'E': 'East'}[side]}."
        exp["declination_deg"] = dec if side == "E" else -dec
    exp["beginning_starts"] = "Beginning at"
    return text, exp, opts


def toml_val(v):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return repr(float(v))
    return '"' + str(v).replace("\\", "\\\\").replace('"', '\\"') + '"'


rnd = random.Random(1796)
count = 0
for i in range(44):
    era = ERAS[i % len(ERAS)]
    text, exp, opts = make(i, era, rnd)
    stem = f"{i + 1:02d}_{era[0]}"
    (OUT / f"{stem}.txt").write_text(text + "\n")
    lines = ["# Expected reading of " + stem + ".txt, from the words as written (see README.md)."]
    lines.append("[options]")
    lines.append(f"lat = {exp['lat']}\nlon = {exp['lon']}")
    for k, v in opts.items():
        lines.append(f"{k.replace('-', '_')} = {toml_val(v)}")
    lines.append("\n[expect]")
    for k in (
        "closed",
        "reference",
        "date",
        "area_acres",
        "declination_deg",
        "vara_inches",
        "beginning_starts",
    ):
        if exp.get(k) is not None:
            lines.append(f"{k} = {toml_val(exp[k])}")
    for c in exp["courses"]:
        lines.append("\n[[course]]")
        for k, v in c.items():
            lines.append(f"{k} = {toml_val(v)}")
    (OUT / f"{stem}.expected.toml").write_text("\n".join(lines) + "\n")
    count += 1
print(count)

"""Speed of reading a whole legal description: 200 courses (budget 1 s).

Run: ``python tests/bench/bench_description.py [--repeat 7] [--courses 200]`` (not collected
by pytest). Prints the median time of :func:`lodeline.geo.description.read_description` on a
generated description (invented: "Beginning at ..., thence N 12 1/2 E 14 perches to a post;
thence ..." in the styles of the test corpus: quadrant bearings in degrees and minutes or
words, perches, chains and links, monument phrases, a stated area and variation) against the
budget, and, in the same process, two reference readings of the same text as ratios: the
standard library's ``re`` cutting it at each ``thence`` (no call read), and ``tomllib``
loading the traverse document ``lodeline read`` writes for it (the same courses as TOML text).
"""

from __future__ import annotations

import argparse
import random
import re
import statistics
import time
import tomllib

from lodeline.geo.description import read_description  # noqa: E402

BUDGET_S = 1.0
_FORMS = (
    "N {d} E {p} perches to a post",
    "S {d}°{m:02d}' W {c} chains {l} links to a stone",
    "North {w} degrees West {p} poles",
    "with the line of the Orrin tract S {d} E {p} 1/2 perches to a white oak",
    "N {d} 1/4 W {c} c. {l} l.",
    "East {p} perches, more or less, to a hickory",
)
_WORDS = ("ten", "twelve", "twenty", "thirty-one", "forty-five", "sixty", "seventy-two")


def description(n: int, seed: int = 1854) -> str:
    rnd = random.Random(seed)
    parts = []
    for _ in range(n):
        form = rnd.choice(_FORMS)
        parts.append(
            form.format(
                d=rnd.randint(1, 89),
                m=rnd.randint(0, 59),
                p=rnd.randint(1, 80),
                c=rnd.randint(1, 30),
                l=rnd.randint(1, 99),
                w=rnd.choice(_WORDS),
            )
        )
    body = ";\nthence ".join(parts)
    return (
        "All that tract in Fallow Township: Beginning at a stone heap by the lane, thence "
        f"{body} to the place of beginning, containing 600 acres, more or less, the needle "
        "then varying 2° W."
    )


def _median(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=7)
    ap.add_argument("--courses", type=int, default=200)
    args = ap.parse_args()
    text = description(args.courses)
    desc = read_description(text, foot="us")
    assert len(desc.courses) == args.courses, len(desc.courses)
    doc_toml = "format_version = 2\n" + "".join(
        f'\n[[course]]\ncall = "{c.call_text.replace(chr(34), "")}"\n' for c in desc.courses
    )
    ours = _median(lambda: read_description(text, foot="us"), args.repeat)
    split = _median(lambda: re.split(r"\bthence\b", text, flags=re.I), args.repeat)
    toml = _median(lambda: tomllib.loads(doc_toml), args.repeat)
    print(f"read_description, {args.courses} courses ({len(text):,} characters)")
    print(
        f"  median {ours * 1000:.1f} ms  (budget {BUDGET_S * 1000:.0f} ms: {ours / BUDGET_S:.3f}x)"
    )
    print(f"  per course {ours / args.courses * 1e6:.0f} µs")
    print(f"  re.split at 'thence' alone: {split * 1000:.3f} ms (ours {ours / split:,.0f}x)")
    print(f"  tomllib of the same courses as TOML: {toml * 1000:.2f} ms (ours {ours / toml:.1f}x)")


if __name__ == "__main__":
    main()

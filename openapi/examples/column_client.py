#!/usr/bin/env python3
"""Post one spreadsheet column to shapegauge and read the flat CSV answer back.

What a spreadsheet macro does, in a dozen lines of standard-library Python: take the
cells of a column exactly as the spreadsheet exports them (blanks and error cells
included), post them as text/csv, and get key,value rows to paste next to the data.

    python3 column_client.py cells.csv                      # normality of the file's column
    python3 column_client.py cells.csv --endpoint describe --keys skewness.G1 verdict.label
    printf '1.2\\n\\n3.4\\n#N/A\\n' | python3 column_client.py - --url http://127.0.0.1:8080
"""

from __future__ import annotations

import argparse
import csv
import io
import sys
import urllib.parse
import urllib.request


def analyse(cells: str, url: str, endpoint: str, options: dict[str, str]) -> list[tuple[str, str]]:
    query = urllib.parse.urlencode({**options, "format": "csv"})
    request = urllib.request.Request(
        f"{url.rstrip('/')}/v1/{endpoint}?{query}",
        data=cells.encode("utf-8"),
        headers={"Content-Type": "text/csv; charset=utf-8"},
    )
    with urllib.request.urlopen(request, timeout=30) as response:
        rows = list(csv.reader(io.StringIO(response.read().decode("utf-8"))))
    return [(key, value) for key, value in rows[1:]]


def main(argv: list[str]) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("file", help="a text or CSV file holding one column ('-' reads standard input)")
    parser.add_argument("--url", default="http://127.0.0.1:8080")
    parser.add_argument("--endpoint", default="normality", choices=["describe", "normality"])
    parser.add_argument("--decimal", default=".", choices=[".", ","])
    parser.add_argument("--keys", nargs="*", help="print only these dotted keys")
    args = parser.parse_args(argv)
    cells = sys.stdin.read() if args.file == "-" else open(args.file, encoding="utf-8-sig").read()
    try:
        rows = analyse(cells, args.url, args.endpoint, {"decimal": args.decimal})
    except urllib.error.HTTPError as err:  # a problem document says what is wrong and where
        print(err.read().decode("utf-8"), file=sys.stderr)
        return 1
    wanted = set(args.keys or [])
    writer = csv.writer(sys.stdout, lineterminator="\n")
    for key, value in rows:
        if not wanted or key in wanted:
            writer.writerow([key, value])
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))

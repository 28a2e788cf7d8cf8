"""The README's examples stay true."""

from __future__ import annotations

import json

import pytest
import re
import shlex
import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
README = (ROOT / "README.md").read_text()


def _block(marker: str) -> str:
    match = re.search(rf"<!-- {marker} -->\s*```json\n(.*?)```\s*<!-- /{marker} -->", README, re.S)
    assert match, f"README has no {marker} block"
    return match.group(1)


def test_demo_verdict_is_what_the_readme_shows(client, demo_payload):
    shown = json.loads(_block("demo-verdict"))
    doc = client.post("/v1/normality", json=demo_payload).get_json()
    assert doc["input"] == shown["input"]
    for key, value in shown["verdict"].items():
        assert doc["verdict"][key] == value, key


def test_readme_curl_line_is_the_one_make_serve_prints():
    printed = subprocess.run(["make", "-n", "serve"], cwd=ROOT, capture_output=True, text=True, check=True).stdout
    curl = next(line for line in README.splitlines() if line.startswith("curl -s -X POST http://127.0.0.1:8080/v1/normality"))
    assert curl in printed.replace("echo ", "").replace('"', "")
    assert Path(ROOT, shlex.split(curl)[-1].lstrip("@")).is_file()


def test_readme_text_example(client):
    body = "cooling_h\n11.2\n\n12.9\n#N/A\n10.4\n13.8\n9.9\n12.1\n"
    r = client.post("/v1/describe?format=csv", data=body, content_type="text/csv")
    assert r.status_code == 200
    rows = dict(line.split(",", 1) for line in r.get_data(as_text=True).splitlines()[1:])
    assert rows["input.label"] == "cooling_h" and rows["input.missing"] == "2" and rows["input.n"] == "6"


def test_partials_sql_produces_what_the_service_merges(client):
    """The README's SQL, run in SQLite on seeded shards, gives partials whose merge equals
    the raw values' moments (reference: scipy.stats on the concatenated values)."""
    import sqlite3

    import numpy as np
    import scipy.stats

    match = re.search(r"<!-- partials-sql -->\s*```sql\n(.*?)```", README, re.S)
    assert match
    rng = np.random.default_rng(77)
    shards = [rng.gamma(2.0, 3.0, size) + 1e6 for size in (1, 9, 250, 1200)]
    db = sqlite3.connect(":memory:")
    db.execute("CREATE TABLE readings (shard INTEGER, x REAL)")
    db.executemany("INSERT INTO readings VALUES (?, ?)", [(i, float(v)) for i, s in enumerate(shards) for v in s])
    columns = ("shard", "n", "mean", "m2", "m3", "m4", "min", "max")
    partials = [dict(zip(columns, row)) for row in db.execute(match.group(1))]
    for p in partials:
        del p["shard"]
    doc = client.post("/v1/describe", json={"partials": partials}).get_json()
    x = np.concatenate(shards)
    assert doc["input"]["n"] == x.size and doc["input"]["shards"] == 4
    assert doc["location"]["mean"] == pytest.approx(x.mean(), rel=1e-12)
    assert doc["spread"]["sd"] == pytest.approx(x.std(ddof=1), rel=1e-6)
    assert doc["skewness"]["G1"] == pytest.approx(scipy.stats.skew(x, bias=False), rel=1e-5)
    assert doc["kurtosis"]["G2"] == pytest.approx(scipy.stats.kurtosis(x, bias=False), rel=1e-5)


def _inline_curl_examples():
    joined = README.replace("\\\n", " ")
    return re.findall(r"curl -s -X POST http://127\.0\.0\.1:8080(/v1/\w+) -H 'Content-Type: application/json'\s+-d '(\{.*?\})'", joined)


def test_readme_inline_json_examples_answer(client, conforms):
    examples = _inline_curl_examples()
    assert len(examples) >= 2
    for path, body in examples:
        r = client.post(path, json=json.loads(body))
        assert r.status_code == 200, (path, r.get_json())
        conforms(r.get_json(), {"describe": "DescribeResponse", "normality": "NormalityResponse"}[path.rsplit("/", 1)[1]])

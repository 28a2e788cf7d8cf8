"""The README's examples stay true."""

from __future__ import annotations

import json
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

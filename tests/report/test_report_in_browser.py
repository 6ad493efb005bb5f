"""The design-review page as a reviewer sees it: rendered in headless Chromium (Debian's
`chromium`), with no console messages (the page has no scripts, so any message is a blocked load
or an error), nothing fetched from outside, every section and every rating check in the DOM with
the numbers of `coilkick run --json`, a screenshot, and a print-to-PDF of a sensible length."""
import html.parser
import json
import os
import re
import subprocess

import pytest

MODELS = os.path.join(os.path.dirname(__file__), "..", "..", "models")
SECTIONS = ["scenario", "on_state", "comparison", "waveforms", "release_curve", "tolerance", "checks", "sources", "caution"]
CHROMIUM = ["chromium", "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars"]


def run(args, **kw):
    out = subprocess.run(args, capture_output=True, text=True, timeout=300, **kw)
    assert out.returncode == 0, "%s\n%s\n%s" % (" ".join(args), out.stdout[-2000:], out.stderr[-2000:])
    return out


class Dom(html.parser.HTMLParser):
    """Section ids and the data attributes of the check rows."""

    def __init__(self):
        super().__init__()
        self.sections, self.checks, self.scripts, self.channels, self.figures = [], {}, 0, [], []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "section":
            self.sections.append(a.get("id"))
        if tag == "script":
            self.scripts += 1
        if tag == "tr" and "data-check" in a:
            self.checks[a["data-check"]] = a
        if tag == "tr" and "data-channel" in a:
            self.channels.append(a["data-channel"])
        if tag == "figure" and "id" in a:
            self.figures.append(a["id"])


def console_messages(stderr):
    return [line for line in stderr.splitlines() if ":CONSOLE" in line]


def test_console_detection_catches_a_blocked_load(tmp_path):
    # The check below must be able to fail: a page that loads from outside and logs is caught.
    page = tmp_path / "bad.html"
    page.write_text("<html><head><meta http-equiv='Content-Security-Policy' content=\"default-src 'none'\"></head>"
                    "<body><img src='http://example.invalid/x.png'></body></html>")
    out = run(CHROMIUM + ["--enable-logging=stderr", "--v=0", "--dump-dom", page.as_uri()])
    assert console_messages(out.stderr)


@pytest.mark.parametrize("scenario", ["greenhouse_valve.toml", "fan_relay.toml", "greenhouse_valve_bank.toml", "greenhouse_valve_cable.toml"])
def test_the_report_in_a_real_browser(scenario, tmp_path, program):
    path = os.path.join(MODELS, "scenarios", scenario)
    page = tmp_path / "review.html"
    run([program, "report", path, "--output", str(page), "--samples", "10", "--quiet"])
    text = page.read_text(encoding="utf-8")
    # Self-contained: a policy that forbids every load, and no URL the page would fetch.
    assert "default-src 'none'" in text
    assert not re.search(r"""(src|href)\s*=\s*["']?(https?:)?//""", text)
    assert not re.search(r"@import|url\(\s*['\"]?https?:", text)

    dom_run = run(CHROMIUM + ["--enable-logging=stderr", "--v=0", "--dump-dom", page.as_uri()])
    assert console_messages(dom_run.stderr) == []
    dom = Dom()
    dom.feed(dom_run.stdout)
    assert dom.sections == SECTIONS
    assert dom.scripts == 0
    # Every rating check, with the command's own numbers and verdicts.
    report = json.loads(run([program, "run", path, "--json"]).stdout)
    assert set(dom.checks) == {c["name"] for c in report["checks"]}
    # A board of several channels: a row per channel, named as the command names them.
    assert dom.channels == [c["name"] for c in report.get("channels", [])]
    # A coil at the end of a cable: the chart of both ends, and only then.
    assert ("cable_ends" in dom.figures) == ("cable" in scenario)
    for c in report["checks"]:
        row = dom.checks[c["name"]]
        assert row["data-status"] == c["status"]
        if c["value"] is None:
            assert row["data-value"] == ""
        else:
            assert float(row["data-value"]) == c["value"]  # written with 17 digits: exact

    shot = tmp_path / "review.png"
    run(CHROMIUM + ["--window-size=1200,1600", "--screenshot=" + str(shot), page.as_uri()], cwd=tmp_path)
    assert shot.stat().st_size > 20_000
    pdf = tmp_path / "review.pdf"
    run(CHROMIUM + ["--no-pdf-header-footer", "--print-to-pdf=" + str(pdf), page.as_uri()], cwd=tmp_path)
    pages = int(re.search(r"Pages:\s+(\d+)", run(["pdfinfo", str(pdf)]).stdout).group(1))
    # Nine sections, each from a new page (print stylesheet), some longer than a page.
    assert 8 <= pages <= 40


def test_report_bad_input(tmp_path, program):
    path = os.path.join(MODELS, "scenarios", "fan_relay.toml")
    out = subprocess.run([program, "report", path, "--output", "/nonexistent/dir/review.html", "--quiet"],
                         capture_output=True, text=True, timeout=300)
    assert out.returncode == 2 and "cannot write '/nonexistent/dir/review.html'" in out.stderr
    bad = tmp_path / "bad.toml"
    bad.write_text('[supply]\nvoltage = "twelve V"\n')
    out = subprocess.run([program, "report", str(bad), "--output", str(tmp_path / "x.html"), "--quiet"],
                         capture_output=True, text=True, timeout=300)
    assert out.returncode == 2 and "%s:2:" % bad in out.stderr
    assert not (tmp_path / "x.html").exists()

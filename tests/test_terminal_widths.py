"""Every command's summary at 60, 80 and 120 columns on a terminal, and redirected: no word is broken (issue 12).

A word is broken when a table squeezes a column below its longest word and
the word is cut into pieces ("Regi" / "on", "marg" / "inal"), or when a line
is cut short with an ellipsis.  The check compares each rendering with the
same command rendered 1000 columns wide: every word of that one must be
found whole in the narrow one (a compact layout may add its own labels but
never cut a word), and no line may be wider than the terminal unless it is a
single word longer than the line.  The inputs are the invented scenarios of
``examples/``, simulated once, and small invented inputs made from them (a
two-entry campaign, two check results to compare, a one-key design).
"""

import re
from pathlib import Path

import pytest

from maskcheck.cli import main

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
ANSI = re.compile(r"\x1b\[[0-9;?]*[A-Za-z]")
#: widths tried on a terminal, and the width of a redirected run (rich's default when COLUMNS says nothing)
TERMINAL_WIDTHS = (60, 80, 120)
REDIRECTED_WIDTH = 80
#: words this much shorter than the line must stay whole (a 64-digit SHA-256 cannot on 60 columns)
WORD_ROOM = 4


STATION = ["--mask", "us-amateur-vhf-30-225mhz", "--carrier", "146.52MHz", "--power", "5W", "--designator", "11K0F3E"]
#: text that differs between two runs of the same command (a measured time), made equal before comparing
UNSTEADY = re.compile(r"\d+(?:\.\d+)?(?=\s+s\s+per\s+simulation)")


@pytest.fixture(scope="module")
def sims(tmp_path_factory):
    root = tmp_path_factory.mktemp("sims")
    for name in ("fm-handheld", "ssb-filter-exciter"):
        assert main(["simulate", str(EXAMPLES / f"{name}.toml"), "--out", str(root / name), "--quiet"]) == 0
    traces = sorted(str(p) for p in (root / "fm-handheld").glob("wideband-*.txt"))
    # an invented campaign of two entries (the same traces judged at two stated powers)
    (root / "campaign.toml").write_text(
        "# INVENTED test campaign\ncampaign_version = 1\nname = \"two invented handheld entries\"\n[defaults]\n"
        'mask = "us-amateur-vhf-30-225mhz"\ndesignator = "11K0F3E"\ncarrier = "146.52 MHz"\noutputs = ["json"]\n'
        '[[matrix]]\nname = "{level}"\ntraces = [' + ", ".join(f'"{t}"' for t in traces) + "]\n[matrix.axis]\n"
        'level = [{ label = "1W", power = "1 W" }, { label = "5W", power = "5 W" }]\n')
    # two results to compare: the same traces, the station stated at 5 W and at 1 W
    for tag, power in (("a", "5W"), ("b", "1W")):
        argv = ["check", *traces, *STATION, "--json", str(root / f"{tag}.json"), "--quiet"]
        argv[argv.index("5W")] = power
        assert main(argv) in (0, 3)
    return root


def _commands(sims: Path, out: Path) -> dict[str, list[str]]:
    fm, ssb = sims / "fm-handheld", sims / "ssb-filter-exciter"
    traces = sorted(str(p) for p in fm.glob("wideband-*.txt"))
    station = STATION
    return {
        "check": ["check", *traces, *station],
        "plan": ["plan", *station],
        "spectrum": ["spectrum", str(fm / "fundamental.sigmf-meta"), "--full-scale", "37dBm"],
        "bandwidth": ["bandwidth", traces[len(traces) // 2] if traces else "-"],
        "designator": ["designator", "11K0F3E", "--carrier", "146.52MHz"],
        "simulate": ["simulate", str(EXAMPLES / "fm-handheld.toml"), "--out", str(out / "sim"), "--force"],
        "twotone": ["twotone", str(ssb / "fundamental.sigmf-meta"), "--carrier", "14.2MHz"],
        "masks list": ["masks", "list"],
        "masks show": ["masks", "show", "us-90210-mask-d"],
        "masks show --power": ["masks", "show", "us-90210-mask-d", "--power", "5W", "--carrier", "151.625MHz"],
        "masks validate": ["masks", "validate", str(Path(__file__).resolve().parents[1] / "masks" / "us-90210-mask-d.toml")],
        "demo": ["demo", "--out", str(out / "demo"), "--force"],
        "masks which": ["masks", "which", "--carrier", "450.1MHz", "--channel", "12.5kHz"],
        "masks audit": ["masks", "audit"],
        "masks plot": ["masks", "plot", "us-90210-mask-d", "--power", "5W", "--carrier", "151.625MHz",
                       "--out", str(out / "mask.svg"), "--force"],
        "convert": ["convert", str(EXAMPLES / "exports" / "vhf-handheld-zoom.csv"), "--out", str(out / "conv.txt"),
                    "--force"],
        "compare": ["compare", str(sims / "a.json"), str(sims / "b.json")],
        "campaign": ["campaign", str(sims / "campaign.toml"), "--out", str(out / "campaign"), "--workers", "0",
                     "--rerun"],
        "design": ["design", str(EXAMPLES / "ssb-phasing-exciter.toml"), "--vary", "modulator.phase_error_deg=0..4",
                   "--goal", "opposite_sideband >= 40 dB", "--samples", "3", "--out", str(out / "design"), "--force"],
    }

#: commands slow enough to be tried at one terminal width below 120 only (the layout code is the same)
SLOW = {"design", "campaign", "demo"}


def _render(monkeypatch, capsys, argv, width: int, terminal: bool) -> str:
    monkeypatch.setenv("COLUMNS", str(width))
    monkeypatch.setenv("TTY_COMPATIBLE", "1" if terminal else "0")
    monkeypatch.setenv("NO_COLOR", "1")
    monkeypatch.delenv("FORCE_COLOR", raising=False)
    capsys.readouterr()
    code = main(argv)
    got = capsys.readouterr()
    assert code in (0, 1, 3), got.err
    err = got.err
    if not terminal:  # the reader's note on what it inferred stays one line when redirected, as a log keeps it
        err = "\n".join(ln for ln in err.splitlines() if not ln.startswith("read '"))
    return UNSTEADY.sub("T", ANSI.sub("", got.out + err))


def _words(text: str, *, headers: bool = True) -> set[str]:
    """The words of a rendering: split at blanks, ends stripped of the separators a layout adds.

    ``headers=False`` leaves out the column names of tables (a line above a
    rule of dashes): the compact layout names only the columns after a row's first.
    """
    lines = text.splitlines()
    if not headers:
        lines = [ln for ln, nxt in zip(lines, lines[1:] + [""]) if not (nxt.strip() and set(nxt.strip()) <= {"-", " "})]
    out = set()
    for token in " ".join(lines).split():
        token = token.strip(";:,")
        if any(ch.isalnum() for ch in token):
            out.add(token)
    return out


def broken_words(narrow: str, wide: str, width: int) -> list[str]:
    """Words of ``wide`` that ``narrow`` does not hold whole, and lines of ``narrow`` wider than ``width``."""
    have = _words(narrow)
    problems = sorted(w for w in _words(wide, headers=False) if len(w) <= width - WORD_ROOM and w not in have)
    for line in narrow.splitlines():
        if len(line) > width and len(line.split()) > 1:
            problems.append(f"line of {len(line)} characters: {line!r}")
        if "…" in line:
            problems.append(f"cut short: {line!r}")
    return problems


_WIDE: dict[str, str] = {}


@pytest.mark.parametrize("name", list(_commands(Path("."), Path("."))))
def test_no_word_is_broken_at_any_width(name, sims, tmp_path, monkeypatch, capsys):
    def argv(_tag):  # the same output folder each time: the paths printed are part of the words compared
        return _commands(sims, tmp_path)[name]

    wide = _render(monkeypatch, capsys, argv("wide"), 1000, False)
    assert len(_words(wide)) > 5, wide
    for width in TERMINAL_WIDTHS if name not in SLOW else (60, 80):
        narrow = _render(monkeypatch, capsys, argv(f"t{width}"), width, True)
        assert broken_words(narrow, wide, width) == [], f"{name} at {width} columns"
    redirected = _render(monkeypatch, capsys, argv("file"), REDIRECTED_WIDTH, False)
    assert broken_words(redirected, wide, REDIRECTED_WIDTH) == [], f"{name} redirected"
    # plain text when redirected: no box-drawing characters, no blanks at line ends
    assert not re.search(r"[─━│┃]", redirected), redirected
    assert all(line == line.rstrip() for line in redirected.splitlines()), redirected


def test_the_check_finds_a_word_cut_by_a_squeezed_column():
    # negative control: a rich table squeezed below its words, as the terminal output was before
    from io import StringIO

    from rich.console import Console
    from rich.table import Table

    t = Table("#", "Region", "Verdict")
    t.add_row("1", "fd beyond 50 kHz (spurious)", "marginal")
    wide_buf, narrow_buf = StringIO(), StringIO()
    Console(file=wide_buf, width=200).print(t)
    t.columns[1].width, t.columns[2].width = 4, 4  # as rich shrinks columns at 80 columns
    Console(file=narrow_buf, width=80).print(t)
    found = broken_words(narrow_buf.getvalue(), wide_buf.getvalue(), 80)
    assert "marginal" in found and "(spurious)" in found


def test_the_check_finds_an_ellipsis_and_an_overlong_line():
    wide = "one two three"
    assert broken_words("one two thr…", wide, 80)
    assert broken_words("one two three " + "x " * 50, wide, 80)


def test_grid_is_a_table_when_it_fits_and_blocks_when_it_does_not():
    from io import StringIO

    from rich.console import Console

    from maskcheck.report.term_layout import grid

    header = ("#", "Region", "Verdict", "Margin")
    rows = [("1", "fd more than 5.625 kHz up to 12.5 kHz (out-of-band)", "marginal", "+0.7 dB")]

    def render(width):
        buf = StringIO()
        con = Console(file=buf, width=width, color_system=None)
        con.print(grid(con, header, rows, right=(0, 3), keys=(0, 1)))
        return buf.getvalue()

    wide = render(200)
    assert wide.splitlines()[0].split() == ["#", "Region", "Verdict", "Margin"]  # a table: one header row
    assert "fd more than 5.625 kHz up to 12.5 kHz (out-of-band)" in wide
    narrow = render(40)
    assert narrow.splitlines()[0].startswith("1 fd more than")  # a block opened by the row's keys
    assert "Verdict: marginal" in narrow and "Margin: +0.7 dB" in narrow
    assert broken_words(narrow, wide, 40) == [] and all(len(ln) <= 40 for ln in narrow.splitlines())


def test_grid_cells_are_text_not_markup():
    from io import StringIO

    from rich.console import Console

    from maskcheck.report.term_layout import grid

    buf = StringIO()
    con = Console(file=buf, width=120, color_system=None)
    con.print(grid(con, ("Region", "Note"), [("[bold]x[/bold]", "see [2]")]))
    assert "[bold]x[/bold]" in buf.getvalue() and "see [2]" in buf.getvalue()

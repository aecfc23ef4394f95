"""The command line answers malformed arguments and files with a message and exit
status 2, never a traceback, and never hangs (issue 15). Each call runs in process
under a 10-second alarm, a guard against a hang rather than a speed target."""

from __future__ import annotations

import signal

import pytest

from trials.cli import main

GARBAGE_FILES = {
    "binary.csv": bytes(range(256)) * 4,
    "ragged.csv": b"panelist,sample,score\nP1,A,5,9\n",
    "quote.csv": b'panelist,sample,score\nP1,"A,5\n',
    "twice.csv": b"panelist,panelist,score\nP1,P2,5\n",
    "infinite.csv": (b"panelist,sample,score,rank\n"
                     b"P1,A,inf,1e400\nP1,B,5,2\nP2,A,-inf,1\nP2,B,4,2\n"),
    "empty.csv": b"",
    "utf16.csv": "panelist,sample,score\nP1,A,5\n".encode("utf-16"),
}
NUMBERS = ["abc", "-5", "0", "1e400", "10" * 12, "nan", "1.5"]


@pytest.fixture
def files(tmp_path):
    for name, data in GARBAGE_FILES.items():
        (tmp_path / name).write_bytes(data)
    (tmp_path / "folder.csv").mkdir()
    (tmp_path / "notdb.db").write_bytes(b"hello, not a database")
    from trials import service
    from trials.model import Sample

    store = service.open_store(f"sqlite:///{tmp_path / 'store.db'}")
    service.create_trial(store, name="Crust", method="triangle",
                         samples=[Sample("Usual", is_control=True), Sample("Short")])
    store.close()  # trial 1 exists, so commands get as far as writing their output
    return tmp_path


def _cases(folder):
    db = f"sqlite:///{folder / 'store.db'}"
    yield ["critical", "--method", "triangle", "--n"], NUMBERS
    yield ["critical", "--method", "triangle", "--n", "20", "--alpha"], NUMBERS
    yield ["difference", "--method", "tetrad", "--n", "20", "--correct"], NUMBERS
    yield ["similarity", "--method", "2afc", "--n", "20", "--correct", "9", "--pd"], NUMBERS
    yield ["plan", "--method", "duo-trio", "--pd", "0.3", "--beta"], NUMBERS
    yield ["plan", "--method", "triangle", "--pd"], NUMBERS
    yield ["dprime", "--method", "3afc", "--pc"], NUMBERS
    yield ["design", "codes", "--count"], NUMBERS
    yield ["design", "williams", "--samples"], NUMBERS
    yield ["design", "williams", "--samples", "4", "--panelists"], NUMBERS
    yield ["design", "sets", "--method", "triangle", "--panelists"], NUMBERS
    yield ["design", "blocks", "--samples", "7", "--per-panelist"], NUMBERS
    files = [str(folder / n) for n in [*GARBAGE_FILES, "folder.csv", "missing.csv"]]
    yield ["analyze", "ratings"], files
    yield ["analyze", "ranks"], files
    yield ["analyze", "profile"], files
    yield ["analyze", "cata"], files
    yield ["analyze", "rindex", "--control", "Usual"], files
    yield ["analyze", "table", "--method", "a-not-a", "--hits", "10", "--signal", "12",
           "--false-alarms", "3", "--noise"], NUMBERS
    yield ["plan", "--method", "rating", "--delta", "1", "--samples", "3", "--sd"], NUMBERS
    yield ["experiment", "design", "--kind", "ccd-face", "--factor"], [
        "salt:%:2:1", "salt:%:1:2:1.5:1.8", "salt", "salt:%:a:b", "::::", "x" * 300,
        "salt:%:1:1e400"]
    yield ["experiment", "design", "--kind", "full-factorial", "--factor", "salt:%:1:2",
           "--center"], NUMBERS
    yield ["experiment", "analyze", "--db", db], NUMBERS
    yield ["trial", "show", "--db", db], NUMBERS
    yield ["study", "list", "--db"], [f"sqlite:///{folder / 'notdb.db'}", "sqlite:/// ",
                                     "sqlite://rel.db", "postgresql://u@h:abc/db", "nonsense"]
    yield ["import", "responses", "--db", db, "--trial", "1"], files
    yield ["export", "responses", "--db", db, "--trial"], NUMBERS
    yield ["print", "ballots", "--db", db, "--out", str(folder / "b.pdf"), "--study"], NUMBERS
    yield ["report", "--db", db, "--out", str(folder / "missing" / "r.html"), "--trial"], ["1"]
    yield ["report", "--db", db, "--trial", "1", "--out"], [str(folder), "/proc/version"]
    yield ["export", "answers", "--db", db, "--trial", "1", "--out"], [
        str(folder / "missing" / "a.csv"), str(folder)]
    yield ["app", "--db", db, "--port"], ["99999", "abc"]


def _alarm(signum, frame):
    raise TimeoutError("a command ran past 10 seconds")


def test_no_malformed_call_gives_a_traceback_or_hangs(files, capsys):
    seen = 0
    previous = signal.signal(signal.SIGALRM, _alarm)
    try:
        for stem, values in _cases(files):
            for value in values:
                argv = [*stem, value, "--json"]
                signal.alarm(10)
                try:
                    code = main(argv)
                except SystemExit as exc:  # argparse: a malformed argument
                    code = exc.code
                finally:
                    signal.alarm(0)
                out, err = capsys.readouterr()
                assert code in (0, 2), (argv, code, err)
                assert "Traceback" not in err, (argv, err)
                if code == 2:
                    assert err.strip(), argv  # a refusal says why
                    assert out == "", argv  # and prints nothing on stdout
                seen += 1
    finally:
        signal.signal(signal.SIGALRM, previous)
    assert seen == sum(len(v) for _, v in _cases(files))


def test_every_command_of_the_parser_is_in_the_fuzz(files):
    from trials.cli import build_parser

    sub = next(a for a in build_parser()._actions if a.dest == "command")
    fuzzed = {stem[0] for stem, _ in _cases(files)}
    assert set(sub.choices) - fuzzed == {"demo"}  # demo takes no argument to get wrong

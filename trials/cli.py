"""The ``trials`` command line: argument parsing and printing only.

Every command takes ``--json`` (anywhere after its name) and then prints one JSON object
and nothing else on stdout. Input errors go to stderr with exit status 2. The work is
done by ``trials.stats``, ``trials.design`` and ``trials.service``; this module only
translates arguments into calls and results into text.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import warnings
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from trials import limits
from trials.errors import TrialsError
from trials.methods import FORCED_CHOICE, METHODS

Handler = Callable[[argparse.Namespace], dict[str, Any]]


# ---------------------------------------------------------------- helpers


def _fraction(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number, got {text!r}") from None
    return value


def _count(text: str) -> int:
    try:
        return int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None


# the largest value each argument takes (trials.limits); smaller bad values are left to
# the functions, whose messages say what is expected
_MOST = {
    "n": (limits.MAX_N, "--n"), "correct": (limits.MAX_N, "--correct"),
    "panelists": (limits.MAX_PANELISTS, "--panelists"),
    "samples": (limits.MAX_SAMPLES, "--samples"),
    "per_panelist": (limits.MAX_SAMPLES, "--per-panelist"),
    "count": (limits.MAX_CODES, "--count"), "port": (limits.MAX_PORT, "--port"),
    "id": (2**31 - 1, "the trial id"), "trial": (2**31 - 1, "--trial"),
}


def _check_limits(args: argparse.Namespace) -> None:
    """Refuse at once a request past the documented limits (trials.limits)."""
    for dest, (most, what) in _MOST.items():
        value = getattr(args, dest, None)
        if isinstance(value, int) and value > most:
            shown = (str(value) if len(str(value)) <= 20
                     else f"{str(value)[:12]}... ({len(str(value))} digits)")
            raise TrialsError(f"{what} may be at most {most:,}; got {shown}")
    for dest in ("alpha", "beta"):
        value = getattr(args, dest, None)
        if isinstance(value, float) and 0 < value < limits.MIN_ALPHA:
            raise TrialsError(f"--{dest} may be no smaller than {limits.MIN_ALPHA:g}; "
                              f"got {value!r}")


def _seed(args: argparse.Namespace) -> int | None:
    return args.seed


def _store(args: argparse.Namespace):
    from trials import service

    return service.open_store(args.db)


def _read_csv(path: str, numbers: Sequence[str] = ()):
    from trials.tabular import read_table

    return read_table(path, numbers=numbers)


# ---------------------------------------------------------------- handlers: statistics


def _critical(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.discrimination import critical_value

    return critical_value(args.n, method=args.method, alpha=args.alpha).to_dict()


def _difference(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.discrimination import difference_test

    return difference_test(
        args.correct, args.n, method=args.method, alpha=args.alpha, level=args.level
    ).to_dict()


def _similarity(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.discrimination import similarity_test

    return similarity_test(
        args.correct, args.n, method=args.method, pd=args.pd, beta=args.beta
    ).to_dict()


def _plan(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.power import panel_size

    return panel_size(args.pd, method=args.method, alpha=args.alpha, beta=args.beta).to_dict()


def _dprime(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.thurstonian import dprime_conversion

    if (args.pc is None) == (args.dprime is None):
        raise TrialsError("give exactly one of --pc or --dprime")
    return dprime_conversion(method=args.method, pc=args.pc, dprime=args.dprime).to_dict()


def _analyze_ratings(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.ratings import rating_anova

    data = _read_csv(args.file, numbers=(args.score,))
    return rating_anova(
        data,
        score=args.score,
        sample=args.sample,
        panelist=args.panelist,
        replicate=args.replicate,
        alpha=args.alpha,
    ).to_dict()


def _analyze_ranks(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.ranks import rank_test

    data = _read_csv(args.file)
    return rank_test(
        data, rank=args.rank, sample=args.sample, panelist=args.panelist, alpha=args.alpha
    ).to_dict()


# ---------------------------------------------------------------- handlers: designs


def _design_codes(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.codes import blinding_codes

    return blinding_codes(args.count, rng=_seed(args)).to_dict()


def _design_williams(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.williams import williams_design

    return williams_design(args.samples, panelists=args.panelists, rng=_seed(args)).to_dict()


def _design_sets(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.sets import discrimination_sets

    return discrimination_sets(args.method, args.panelists, rng=_seed(args)).to_dict()


def _design_blocks(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.blocks import incomplete_blocks

    return incomplete_blocks(
        args.samples, args.per_panelist, panelists=args.panelists, rng=_seed(args)
    ).to_dict()


# ---------------------------------------------------------------- handlers: the store


def _study_list(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    return {"studies": [s.to_dict() for s in service.list_trials(_store(args))]}


def _study_show(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    return {"study": service.trial_overview(_store(args), args.id).to_dict()}


def _import_answers(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    rows = service.import_answers(_store(args), args.trial, Path(args.file))
    return {"imported": rows}


def _export_answers(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    out = Path(args.out)
    rows = service.export_answers(_store(args), args.trial, out, fmt=args.format)
    return {"rows": rows, "path": str(out)}


def _print(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    out = Path(args.out)
    base_url = args.base_url or os.environ.get("TRIALS_BASE_URL", "")
    pages = service.print_document(_store(args), args.trial, args.kind, out, base_url=base_url)
    return {"pages": pages, "path": str(out)}


def _report(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    out = Path(args.out)
    decision = service.write_report(_store(args), args.trial, out)
    return {"decision": decision, "path": str(out)}


def _demo(args: argparse.Namespace) -> dict[str, Any]:
    from trials.demo import seed_demo

    return {"studies": [s.to_dict() for s in seed_demo(_store(args))]}


def _passcode_is_set() -> bool:
    """A leader passcode in TRIALS_PASSCODE or in .streamlit/secrets.toml (as the app
    reads it, see trials.ui.configured_passcode)."""
    if os.environ.get("TRIALS_PASSCODE"):
        return True
    import tomllib

    secrets = Path(".streamlit") / "secrets.toml"
    try:
        data = tomllib.loads(secrets.read_text(encoding="utf-8"))
    except (OSError, tomllib.TOMLDecodeError):
        return False
    return bool(data.get("leader_passcode") or data.get("TRIALS_PASSCODE"))


LOCAL_HOST = "127.0.0.1"
LOCAL_HOSTS = (LOCAL_HOST, "localhost", "::1")


def app_command(port: int | None = None, host: str | None = None) -> list[str]:
    """The ``streamlit run`` command line that serves the app, through
    :func:`trials.ui.serve` (the screens' modules imported before the server starts)."""
    entry = Path(__file__).with_name("app.py")
    cmd = [sys.executable, "-c", "from trials.ui import serve; serve()", "run", str(entry)]
    cmd += ["--browser.gatherUsageStats", "false"]
    cmd += ["--client.toolbarMode", "minimal"]  # no developer menu on kitchen tablets
    if not os.environ.get("DISPLAY") or os.environ.get("CI"):
        cmd += ["--server.headless", "true"]
    if port:
        cmd += ["--server.port", str(port)]
    if host:
        cmd += ["--server.address", host]
    return cmd


def _app(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service
    from trials.demo import seed_demo

    host = args.host or LOCAL_HOST
    if host not in LOCAL_HOSTS and not _passcode_is_set() and not args.open:
        raise TrialsError(
            f"--host {host} serves the app to the network, but no leader passcode is set: "
            "set TRIALS_PASSCODE first (or pass --no-passcode to serve the leader screens "
            "to anyone who can reach this address)"
        )
    store = service.open_store(args.db)
    if args.demo and not service.list_trials(store):
        seed_demo(store)
    store.close()
    env = dict(os.environ)
    if args.db:
        env["TRIALS_DB"] = args.db
    cmd = app_command(args.port, host)
    # exec: the server takes this process's place, so a signal sent to it (kill, Ctrl-C)
    # reaches Streamlit itself and no child is left holding the port
    sys.stdout.flush()
    os.execvpe(cmd[0], cmd, env)
    return {"exit": 1}  # not reached


# ---------------------------------------------------------------- the parser


def _add_json(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print one JSON object and nothing else")


def _add_db(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--db",
        default=None,
        help="SQLAlchemy URL of the store (default: $TRIALS_DB, else sqlite:///trials.db)",
    )


def _add_seed(p: argparse.ArgumentParser) -> None:
    p.add_argument("--seed", type=_count, default=None, help="seed, for a plan you can redraw")


def _add_trial(p: argparse.ArgumentParser) -> None:
    p.add_argument("--trial", "--study", dest="trial", required=True, type=_count,
                   metavar="ID", help="the trial's id (--study also works)")


def _leaf(sub, name: str, handler: Handler, help_text: str, *, db: bool = False,
          aliases: Sequence[str] = ()):
    p = sub.add_parser(name, help=help_text, description=help_text, aliases=list(aliases))
    p.set_defaults(handler=handler)
    _add_json(p)
    if db:
        _add_db(p)
    return p


def build_parser() -> argparse.ArgumentParser:
    names = [m.name for m in METHODS]
    parser = argparse.ArgumentParser(
        prog="trials",
        description="Kitchen Trials: plan, serve, collect, analyse and decide blind tastings.",
    )
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    p = _leaf(sub, "critical", _critical, "fewest correct answers that conclude a difference")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--n", required=True, type=_count)
    p.add_argument("--alpha", type=_fraction, default=0.05)

    p = _leaf(sub, "difference", _difference, "exact test of a difference, with pd and d'")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--correct", required=True, type=_count)
    p.add_argument("--n", required=True, type=_count)
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p.add_argument("--level", type=_fraction, default=0.95, help="confidence level")

    p = _leaf(sub, "similarity", _similarity, "similarity test for a largest acceptable pd")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--correct", required=True, type=_count)
    p.add_argument("--n", required=True, type=_count)
    p.add_argument("--pd", required=True, type=_fraction)
    p.add_argument("--beta", type=_fraction, default=0.05)

    p = _leaf(sub, "plan", _plan, "fewest panelists for alpha, beta and pd")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--pd", required=True, type=_fraction)
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p.add_argument("--beta", type=_fraction, default=0.20)

    p = _leaf(sub, "dprime", _dprime, "convert proportion correct to Thurstonian d' or back")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--pc", type=_fraction, default=None)
    p.add_argument("--dprime", type=_fraction, default=None)

    design = sub.add_parser("design", help="blinding codes and serving orders")
    dsub = design.add_subparsers(dest="design", required=True, metavar="KIND")
    p = _leaf(dsub, "codes", _design_codes, "unique three-digit blinding codes")
    p.add_argument("--count", required=True, type=_count)
    _add_seed(p)
    p = _leaf(dsub, "williams", _design_williams, "Williams serving orders")
    p.add_argument("--samples", required=True, type=_count)
    p.add_argument("--panelists", type=_count, default=None)
    _add_seed(p)
    p = _leaf(dsub, "sets", _design_sets, "balanced discrimination sets")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--panelists", required=True, type=_count)
    _add_seed(p)
    p = _leaf(dsub, "blocks", _design_blocks, "balanced incomplete blocks")
    p.add_argument("--samples", required=True, type=_count)
    p.add_argument("--per-panelist", required=True, type=_count)
    p.add_argument("--panelists", type=_count, default=None)
    _add_seed(p)

    analyze = sub.add_parser("analyze", help="analyse ratings or ranks from a tidy CSV")
    asub = analyze.add_subparsers(dest="analysis", required=True, metavar="KIND")
    p = _leaf(asub, "ratings", _analyze_ratings, "ANOVA of ratings with panelist blocks")
    p.add_argument("file")
    p.add_argument("--score", default="score")
    p.add_argument("--sample", default="sample")
    p.add_argument("--panelist", default="panelist")
    p.add_argument("--replicate", default=None)
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p = _leaf(asub, "ranks", _analyze_ranks, (
        "rank test with rank-sum comparisons: Friedman (1937) for complete blocks, "
        "Durbin (1951) when each panelist ranked only some samples"
    ))
    p.add_argument("file")
    p.add_argument("--rank", default="rank")
    p.add_argument("--sample", default="sample")
    p.add_argument("--panelist", default="panelist")
    p.add_argument("--alpha", type=_fraction, default=0.05)

    trial = sub.add_parser("trial", aliases=["study"], help="trials on file ('study' also works)")
    tsub = trial.add_subparsers(dest="trial_cmd", required=True, metavar="ACTION")
    _leaf(tsub, "list", _study_list, "list the trials", db=True)
    p = _leaf(tsub, "show", _study_show, "show one trial", db=True)
    p.add_argument("id", type=_count)

    imp = sub.add_parser("import", help="import answers from a file")
    isub = imp.add_subparsers(dest="import_cmd", required=True, metavar="WHAT")
    p = _leaf(isub, "answers", _import_answers, "import answers (all rows or none); "
              "'responses' also works", db=True, aliases=["responses"])
    p.add_argument("file")
    _add_trial(p)

    exp = sub.add_parser("export", help="export answers to a file")
    esub = exp.add_subparsers(dest="export_cmd", required=True, metavar="WHAT")
    p = _leaf(esub, "answers", _export_answers, "export answers with the key; 'responses' "
              "also works", db=True, aliases=["responses"])
    _add_trial(p)
    p.add_argument("--format", choices=("csv", "xlsx"), default="csv")
    p.add_argument("--out", required=True)

    prn = sub.add_parser("print", help="print ballots, the serving sheet or cup labels")
    psub = prn.add_subparsers(dest="kind", required=True, metavar="WHAT")
    for kind, text in (
        ("ballots", "one ballot per panelist and session"),
        ("sheet", "the serving sheet with the decoding key (kitchen only)"),
        ("labels", "cup labels in serving order"),
    ):
        p = _leaf(psub, kind, _print, text, db=True)
        _add_trial(p)
        p.add_argument("--out", required=True)
        p.add_argument(
            "--base-url",
            default=None,
            help="the app's address on the kitchen network, for the ballots' QR codes "
            "(default: $TRIALS_BASE_URL)",
        )

    p = _leaf(sub, "report", _report, "write the trial's report as HTML", db=True)
    _add_trial(p)
    p.add_argument("--out", required=True)

    _leaf(sub, "demo", _demo, "seed the invented demo trials", db=True)

    p = _leaf(sub, "app", _app, "start the Streamlit app", db=True)
    p.add_argument("--port", type=_count, default=None)
    p.add_argument("--host", default=None,
                   help="address to listen on (default 127.0.0.1, this machine only; "
                   "0.0.0.0 for the kitchen network, which needs TRIALS_PASSCODE)")
    p.add_argument("--no-passcode", dest="open", action="store_true",
                   help="serve to the network without a leader passcode (not advised)")
    p.add_argument("--demo", action="store_true", help="seed the demo trials if the store is empty")
    del names
    return parser


def _human(result: dict[str, Any]) -> str:
    lines = []
    for key, value in result.items():
        if isinstance(value, (dict, list)):
            value = json.dumps(value, default=str)
        lines.append(f"{key}: {value}")
    return "\n".join(lines)


def _note(message, category, filename, lineno, file=None, line=None) -> None:
    """Warnings (an unbalanced plan, a small panel) as one plain line on stderr."""
    print(f"trials: note: {message}", file=sys.stderr)


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        warnings.showwarning = _note
        try:
            _check_limits(args)
            result = args.handler(args)
        except TrialsError as exc:
            print(f"trials: {exc}", file=sys.stderr)
            return 2
        except OSError as exc:  # a missing folder, a folder given as a file, a full disk
            where = f" ({exc.filename})" if exc.filename else ""
            print(f"trials: {exc.strerror or exc}{where}", file=sys.stderr)
            return 2
    if args.command == "app":
        return int(result.get("exit", 0))
    text = json.dumps(result, default=str) if args.json else _human(result)
    try:
        print(text)
        sys.stdout.flush()
    except BrokenPipeError:  # the reader (head, a pager) stopped early: not an error
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return 0


if __name__ == "__main__":
    sys.exit(main())

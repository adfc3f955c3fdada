"""The command line. Only this module turns ReportgenErrors into messages and exit codes.

Start-up is kept light: WeasyPrint and matplotlib are imported only when a build
renders, never for --help, plugins, check or schema.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import signal
import sys
import threading
import traceback
from collections.abc import Sequence
from pathlib import Path

from reportgen.errors import ExitCode, JobError, ReportgenError

PROG = "reportgen"


def _parser() -> argparse.ArgumentParser:
    from reportgen._version import __version__

    p = argparse.ArgumentParser(
        prog=PROG, description="Build vibration calculation packages (PDF + results.json)"
        " from TOML job files.",
        epilog="Exit codes: 0 built and every design check passes; 1 built with failing"
        " checks; 2 invalid input or usage, nothing written; 3 plugin, verification or"
        " render failure, nothing written.")
    p.add_argument("--version", action="version", version=f"{PROG} {__version__}")
    p.add_argument("--debug", action="store_true", help="show tracebacks on errors")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    def common(sp: argparse.ArgumentParser) -> None:
        sp.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show tracebacks on errors")

    b = sub.add_parser("build", help="build a job file, or every *.toml job in a folder")
    b.add_argument("target", type=Path, help="a job file (JOB.toml) or a folder of job files")
    b.add_argument("--out", type=Path, default=Path("out"), help="output folder (default ./out)")
    _build_flags(b)
    common(b)

    d = sub.add_parser("demo", help="build the bundled sample calc set")
    d.add_argument("--out", type=Path, default=Path("out"), help="output folder (default ./out)")
    d.add_argument("--jobs", type=int, default=None, help="worker processes")
    d.add_argument("--force", action="store_true",
                   help="replace files of an earlier demo in the output folder")
    common(d)

    pl = sub.add_parser("plugins", help="list calc types, their plugin package, version and inputs")
    common(pl)

    cr = sub.add_parser("criteria", help="list the criteria calcs can cite by name, with"
                        " their quantity and source")
    cr.add_argument("--template-dir", type=Path, default=None,
                    help="also list a firm's own criteria (its criteria/*.csv|*.toml)")
    cr.add_argument("--json", action="store_true", help="print JSON")
    common(cr)

    c = sub.add_parser("check", help="validate job files without building (exit 0 or 2)")
    c.add_argument("jobs", type=Path, nargs="+", help="job files or folders")
    common(c)

    s = sub.add_parser("schema", help="print a JSON Schema of the job format with every"
                       " installed calc type's inputs")
    common(s)

    v = sub.add_parser("verify", help="rebuild a package's embedded job and compare results")
    v.add_argument("packages", type=Path, nargs="+", help="package PDFs or folders of them")
    v.add_argument("--rtol", type=float, default=1e-9, help="relative tolerance (default 1e-9)")
    v.add_argument("--jobs", type=int, default=None, help="worker processes")
    v.add_argument("--executor", choices=("local", "dask"), default="local")
    v.add_argument("--scheduler", default=None, help="Dask scheduler address")
    common(v)

    sl = sub.add_parser("seal", help="sign a final package into its cover's seal box"
                        " (passphrase from a terminal prompt or REPORTGEN_SEAL_PASSPHRASE)")
    sl.add_argument("package", type=Path, help="the package PDF")
    _seal_flags(sl, "--key")
    sl.add_argument("--out", type=Path, default=None,
                    help="write the sealed package here (default: in place)")
    common(sl)

    e = sub.add_parser("extract", help="write a package's embedded files into a folder")
    e.add_argument("package", type=Path)
    e.add_argument("dir", type=Path)
    common(e)

    df = sub.add_parser("diff", help="compare two revisions (packages or job files)")
    df.add_argument("old", type=Path)
    df.add_argument("new", type=Path)
    common(df)

    pv = sub.add_parser("preview", help="serve a job's package as a web page that updates"
                        " on every save (computation and HTML only)")
    pv.add_argument("job", type=Path, help="the job file")
    pv.add_argument("--port", type=int, default=None, help="port (default: a free one)")
    pv.add_argument("--host", default=None,
                    help="address to serve on (default 127.0.0.1; any other is reachable"
                    " from the network)")
    common(pv)

    sc = sub.add_parser("completion", help="print a shell completion script (bash or zsh)")
    sc.add_argument("shell", choices=("bash", "zsh"))
    common(sc)

    n = sub.add_parser("new-plugin", help="scaffold a pip-installable in-house calc plugin")
    n.add_argument("name", help="plugin name, e.g. acme_pump_base")
    n.add_argument("--dir", type=Path, default=None, help="where to write it (default ./NAME)")
    common(n)
    return p


def _build_flags(b: argparse.ArgumentParser) -> None:
    b.add_argument("--force", action="store_true",
                   help="replace an existing package of the same calc number and revision")
    b.add_argument("--final", action="store_true",
                   help="refuse unless checked, approved, verified and every check passes")
    b.add_argument("--html", action="store_true", help="also write the self-contained HTML")
    if b.prog.endswith(" build"):
        b.add_argument("--split", action="store_true",
                       help="an equipment schedule: one package per row (calc number"
                       " <calc_number>-<tag>) and the set's register")
    b.add_argument("--no-cache", action="store_true", help="do not read or write the asset cache")
    b.add_argument("--jobs", type=int, default=None,
                   help="worker processes (default: the number of cores)")
    b.add_argument("--template-dir", type=Path, default=None,
                   help="a firm's template folder (overrides [package] template_dir)")
    b.add_argument("--executor", choices=("local", "dask"), default="local",
                   help="where folder builds run (dask needs reportgen[dask])")
    b.add_argument("--scheduler", default=None, help="Dask scheduler address")
    _seal_flags(b, "--seal-key")


def _seal_flags(p: argparse.ArgumentParser, key: str) -> None:
    p.add_argument(key, type=Path, default=None, required=key == "--key",
                   help="PKCS#12 or PEM file with the signer's key and certificate"
                   + (" (with --final: seal the package)" if key != "--key" else ""))
    p.add_argument("--tsa-url", default=None,
                   help="an RFC 3161 time-stamp authority to time-stamp the seal")


def main(argv: Sequence[str] | None = None) -> int:
    parser = _parser()
    args = parser.parse_args(argv)
    if not args.command:
        parser.print_help()
        return ExitCode.INVALID_INPUT
    debug = bool(getattr(args, "debug", False))
    if args.command in ("build", "demo", "verify"):
        from reportgen.pipeline.lifeline import install_fork_hook

        install_fork_hook()  # every helper process dies with this one
    try:
        with _terminate_as_interrupt(args.command in ("build", "demo")):
            return int(_dispatch(args))
    except ReportgenError as exc:
        if debug:
            traceback.print_exc()
        _print_error(exc)
        return int(exc.exit_code)
    except KeyboardInterrupt:
        print(f"{PROG}: {_interrupted()}", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return _stdout_gone()
    except Exception as exc:  # a bug: say so plainly, traceback only on request
        if debug:
            traceback.print_exc()
        print(f"{PROG}: internal error: {type(exc).__name__}: {exc}"
              " (run with --debug for the traceback)", file=sys.stderr)
        return int(ExitCode.FAILURE)


def _interrupted() -> str:
    """What an interrupt left on disk, in words: exactly the files this run committed."""
    from reportgen.pipeline.commit import committed

    if not committed:
        return "interrupted; nothing was committed (no file was written under a final name)"
    names = ", ".join(str(p) for p in committed)
    return f"interrupted after committing {names}; nothing else was written"


def _stdout_gone() -> int:
    """The reader of our output left (``reportgen plugins | head -1``): stop quietly.

    Exit 141, as a process that SIGPIPE ended reports in a shell; stdout is pointed at
    the null device so the final flush cannot raise again.
    """
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError):
        pass
    return 141


@contextlib.contextmanager
def _terminate_as_interrupt(active: bool):
    """During a build, SIGTERM unwinds like Ctrl-C so temporary files are removed."""
    if not active or threading.current_thread() is not threading.main_thread():
        yield
        return

    def interrupt(signum, frame):
        raise KeyboardInterrupt

    previous = signal.signal(signal.SIGTERM, interrupt)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


def _visible(text: str) -> str:
    """Control and bidi characters from a job file as escapes: a message quoting a hostile
    key or value must not drive the terminal (colours, cursor moves, reordered text)."""
    return "".join(ch if ch == "\n" or ch.isprintable() else f"\\u{ord(ch):04x}"
                   if ord(ch) < 0x10000 else f"\\U{ord(ch):08x}" for ch in text)


def _print_error(exc: ReportgenError) -> None:
    if isinstance(exc, JobError):
        for problem in exc.problems:
            print(_visible(f"error: {str(problem).lstrip(': ')}"), file=sys.stderr)
        n = len(exc.problems)
        if n > 1:
            print(f"{n} problems; nothing was written", file=sys.stderr)
        return
    print(_visible(f"error: {exc}"), file=sys.stderr)


def _dispatch(args: argparse.Namespace) -> int:
    cmd = args.command
    if cmd == "plugins":
        from reportgen.cli.commands import list_plugins

        return list_plugins()
    if cmd == "criteria":
        from reportgen.cli.criteria import criteria_command

        return criteria_command(args.template_dir, args.json)
    if cmd == "check":
        from reportgen.cli.commands import check_jobs

        return check_jobs(args.jobs)
    if cmd == "schema":
        from reportgen.cli.commands import print_schema

        return print_schema()
    if cmd in ("build", "demo"):
        from reportgen.cli.commands import build_command

        return build_command(args)
    if cmd == "verify":
        from reportgen.cli.commands import verify_command

        return verify_command(args)
    if cmd == "seal":
        from reportgen.cli.seal import seal_command

        return seal_command(args)
    if cmd == "extract":
        from reportgen.cli.commands import extract_command

        return extract_command(args.package, args.dir)
    if cmd == "diff":
        from reportgen.cli.commands import diff_command

        return diff_command(args.old, args.new)
    if cmd == "preview":
        from reportgen.cli.preview import preview_command

        return preview_command(args.job, args.host, args.port)
    if cmd == "completion":
        import shtab  # only here: start-up stays light

        print(shtab.complete(_parser(), shell=args.shell), end="")
        return int(ExitCode.OK)
    if cmd == "new-plugin":
        from reportgen.cli.scaffold import new_plugin

        return new_plugin(args.name, args.dir)
    raise JobError(f"unknown command {cmd}")


def run() -> None:
    """The console command: :func:`main`, then leave without the interpreter's teardown.

    Every output is written, synced and renamed and every helper process reaped before
    ``main`` returns; what is left is freeing the laid-out document, one cyclic garbage
    collection over millions of objects (~0.7 s for 78 pages). The process ends instead.
    """
    try:
        code = main()
    except SystemExit as exc:  # argparse's --help, --version and usage errors
        code = exc.code if isinstance(exc.code, int) else int(exc.code is not None)
    except BrokenPipeError:
        code = _stdout_gone()
    try:
        sys.stdout.flush()  # a pipe is block-buffered: this is where a gone reader shows
    except BrokenPipeError:
        code = _stdout_gone()
    from reportgen.pipeline.lifeline import leave_now

    leave_now(code)


if __name__ == "__main__":  # pragma: no cover
    run()

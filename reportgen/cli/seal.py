"""The seal on the command line: `reportgen seal`, `build --final --seal-key`, the
passphrase (a terminal prompt or REPORTGEN_SEAL_PASSPHRASE, never an argument) and what
verify prints about seals and pages."""

from __future__ import annotations

import getpass
import os
import sys
from pathlib import Path
from typing import Any

from reportgen.errors import ExitCode, JobError, Problem


def read_key(path: Path):
    """The signer's key: asks for the passphrase on a terminal when the key needs one."""
    from reportgen.package.seal import PASSPHRASE_ENV, key_needs_passphrase, load_key

    if not path.is_file():
        raise JobError(Problem(str(path), "no such key file", field="--key"))
    env = os.environ.get(PASSPHRASE_ENV)
    if env is not None:
        return load_key(path, env.encode("utf-8") or None)
    if key_needs_passphrase(path) and sys.stdin.isatty():
        secret = getpass.getpass(f"passphrase for {path}: ")
        return load_key(path, secret.encode("utf-8"))
    return load_key(path, None)


def seal_command(args: Any) -> int:
    from reportgen.pipeline.seal import seal_file

    target = seal_file(args.package, read_key(args.key), out=args.out, tsa_url=args.tsa_url)
    print(f"sealed: {target}")
    return int(ExitCode.OK)


def build_sealer(args: Any, target: Path):
    """The function the build applies to the finished PDF: seal it, then check it."""
    from reportgen.package.seal import seal_bytes
    from reportgen.pipeline.seal import check_sealed

    if not args.final:
        raise JobError(Problem(str(target), "--seal-key needs --final: only a final package"
                               " can be sealed", field="--seal-key"))
    if target.is_dir():
        raise JobError(Problem(str(target), "--seal-key seals one package: build the job"
                               " file, or seal each package with reportgen seal",
                               field="--seal-key"))
    key = read_key(args.seal_key)
    tsa = args.tsa_url

    def seal(pdf: bytes) -> bytes:
        sealed = seal_bytes(pdf, key, where=str(target), tsa_url=tsa)
        check_sealed(sealed, target)
        return sealed

    return seal


def print_shown(o: dict[str, Any]) -> None:
    """verify's lines about the seals and the pages."""
    for lines in o.get("seals", []):
        print(f"  {lines[0]}")
        for line in lines[1:]:
            print(f"    {line}")
    if o.get("page_check"):
        print(f"  pages: {o['page_check']}; the summary prints the embedded results")
    for line in o.get("shown", []):
        print(f"  ALTERED: {line}")
    for line in o.get("notes", []):
        print(f"  note: {line}")

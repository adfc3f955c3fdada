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


DEMO_FOLDER = "sealed"


def demo_refuse_existing(out: Path, force: bool) -> None:
    """The demo writes its sealed sample into OUT/sealed/: never over a user's files."""
    folder = out / DEMO_FOLDER
    if not force and folder.exists() and any(folder.iterdir()):
        raise JobError(Problem(str(folder), "already exists; reportgen demo replaces files"
                               " only with --force (or give another --out folder)"))


def demo_seal(out: Path, built: list[dict[str, Any]]) -> None:
    """Seal a copy of the demo's first final package with a key made on the spot for the
    invented approver (written beside it: the certificate only, never the key)."""
    from reportgen.package.seal import load_key, make_test_key
    from reportgen.pipeline.commit import atomic_write
    from reportgen.pipeline.seal import seal_file

    final = [o for o in built if o.get("review_state") == "approved"
             and not o.get("checks_failed")]
    if not final:
        return
    folder = out / DEMO_FOLDER
    folder.mkdir(exist_ok=True)
    pem = make_test_key("S. Brannock", "Quillmoor Engineering Partners (invented)", None,
                        pem=True)
    cert = pem[pem.index(b"-----BEGIN CERTIFICATE"):]
    import tempfile

    with tempfile.TemporaryDirectory(prefix="reportgen-demo-key-") as tmp:
        key_path = Path(tmp) / "demo.pem"
        key_path.write_bytes(pem)
        key = load_key(key_path, None)
    source = Path(final[0]["pdf"])
    target = seal_file(source, key, out=folder / source.name)
    atomic_write(folder / "demo-seal-certificate.pem", cert)
    print(f"sealed sample: {target} (signed with a test certificate made just now for an"
          " invented approver: a demonstration, not a seal)")

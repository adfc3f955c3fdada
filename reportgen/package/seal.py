"""The digital seal: sign a package into its cover's seal box (PAdES baseline, through
pyHanko), and read back what each seal in a package covers and whether it still holds.

The seal box is found in the PDF itself: the cover template gives the box the id
``reportgen-seal-box`` and a zero-size mark in its lower right corner the id
``reportgen-seal-box-end``; WeasyPrint writes both as named destinations, which give the
box's page and its rectangle in PDF points.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import io
from pathlib import Path
from typing import Any

from reportgen.errors import JobError, Problem

SEAL_BOX = "reportgen-seal-box"
SEAL_BOX_END = "reportgen-seal-box-end"
FIELD_NAME = "EngineerSeal"
REASON = "Approved for issue"
PASSPHRASE_ENV = "REPORTGEN_SEAL_PASSPHRASE"
#: Room left at the foot of the box for its printed label ("Engineer's seal or stamp").
_LABEL_ROOM = 12.0


class SealError(JobError):
    """A package cannot be sealed (no seal box, unreadable key, already sealed...)."""


# ---------------------------------------------------------------- the key


@dataclasses.dataclass(frozen=True)
class SealKey:
    """A loaded signing key and certificate (pyHanko's signer), and who it names."""

    signer: Any
    name: str  # the certificate subject's common name (or the whole subject)
    subject: str


def key_needs_passphrase(path: Path) -> bool:
    """Whether the key file cannot be read without a passphrase."""
    try:
        load_key(path, None)
    except SealError as exc:
        return "passphrase" in str(exc)
    return False


def load_key(path: Path, passphrase: bytes | None) -> SealKey:
    """Read a PKCS#12 file, or a PEM file holding the private key and its certificate.

    Raises SealError naming the file when it cannot be read, needs a passphrase, or holds
    no key or no certificate.
    """
    from asn1crypto import keys as asn1_keys
    from asn1crypto import x509 as asn1_x509
    from cryptography import x509
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.serialization import pkcs12
    from pyhanko.sign import signers
    from pyhanko_certvalidator.registry import SimpleCertificateStore

    where = str(path)
    try:
        data = Path(path).read_bytes()
    except OSError as exc:
        raise SealError(Problem(where, f"cannot read the key file: {exc.strerror or exc}",
                                field="--key")) from None
    need = ("the key is protected by a passphrase: set " + PASSPHRASE_ENV
            + " or run on a terminal to be asked for it")
    certs: list[Any] = []
    if b"-----BEGIN" in data:
        try:
            key = serialization.load_pem_private_key(data, passphrase)
        except TypeError:
            raise SealError(Problem(where, need if passphrase is None else
                                    "the key file is not encrypted, but a passphrase was"
                                    " given", field="--key")) from None
        except ValueError as exc:
            bad = "passphrase" in str(exc).lower() or "decrypt" in str(exc).lower()
            raise SealError(Problem(where, "wrong passphrase for the key" if bad else
                                    f"no private key in this PEM file ({exc})",
                                    field="--key")) from None
        try:
            certs = x509.load_pem_x509_certificates(data)
        except ValueError:
            certs = []
    else:
        try:
            key, cert, extra = pkcs12.load_key_and_certificates(data, passphrase)
        except ValueError as exc:
            if passphrase is None:
                raise SealError(Problem(where, need, field="--key")) from None
            raise SealError(Problem(where, "not a PKCS#12 or PEM key file, or a wrong"
                                    f" passphrase ({exc})", field="--key")) from None
        certs = ([cert] if cert is not None else []) + list(extra or [])
    if key is None or not certs:
        raise SealError(Problem(where, "the key file must hold the private key and its"
                                " certificate", field="--key"))
    pub = key.public_key().public_bytes(serialization.Encoding.DER,
                                        serialization.PublicFormat.SubjectPublicKeyInfo)
    own = [c for c in certs if c.public_key().public_bytes(
        serialization.Encoding.DER, serialization.PublicFormat.SubjectPublicKeyInfo) == pub]
    if not own:
        raise SealError(Problem(where, "no certificate in the key file matches its private"
                                " key", field="--key"))
    der_key = key.private_bytes(serialization.Encoding.DER, serialization.PrivateFormat.PKCS8,
                                serialization.NoEncryption())
    signing_cert = asn1_x509.Certificate.load(own[0].public_bytes(serialization.Encoding.DER))
    others = [asn1_x509.Certificate.load(c.public_bytes(serialization.Encoding.DER))
              for c in certs if c is not own[0]]
    signer = signers.SimpleSigner(
        signing_cert=signing_cert, signing_key=asn1_keys.PrivateKeyInfo.load(der_key),
        cert_registry=SimpleCertificateStore.from_certs(others))
    return SealKey(signer=signer, name=common_name(signing_cert),
                   subject=signing_cert.subject.human_friendly)


def common_name(cert: Any) -> str:
    native = cert.subject.native
    return str(native.get("common_name") or cert.subject.human_friendly)


# ---------------------------------------------------------------- the box


def seal_box(data: bytes, where: str = "package") -> tuple[int, tuple[float, float, float,
                                                                       float]]:
    """(page index, (x1, y1, x2, y2)) of the cover's seal box, from its named destinations."""
    import pikepdf

    with pikepdf.open(io.BytesIO(data)) as pdf:
        dests = pdf.Root.get("/Names", {}).get("/Dests")
        found = {}
        if dests is not None:
            tree = pikepdf.NameTree(dests)
            for name in (SEAL_BOX, SEAL_BOX_END):
                if name in tree:
                    found[name] = tree[name]
        if len(found) < 2:
            raise SealError(Problem(where, "the cover has no seal box to sign into (its"
                                    f" template marks none with id '{SEAL_BOX}')"))
        pages = {p.objgen: i for i, p in enumerate(pdf.pages)}
        top, end = found[SEAL_BOX], found[SEAL_BOX_END]
        page = pages.get(top[0].objgen)
        if page is None or pages.get(end[0].objgen) != page:
            raise SealError(Problem(where, "the seal box does not lie on one page"))
        x1, y2, x2, y1 = float(top[2]), float(top[3]), float(end[2]), float(end[3])
    if not (x2 - x1 > 36 and y2 - y1 > 36 + _LABEL_ROOM):
        raise SealError(Problem(where, "the seal box is too small to sign into"
                                f" ({x2 - x1:.0f} × {y2 - y1:.0f} pt)"))
    return page, (x1 + 3, y1 + _LABEL_ROOM, x2 - 3, y2 - 3)


def _appearance(name: str, when: dt.datetime, size: tuple[float, float],
                tsa: bool) -> bytes:
    """The seal's visible face as a one-page PDF (WeasyPrint: fonts embedded, PDF/A-safe)."""
    from html import escape

    import weasyprint

    w, h = size
    stamp = when.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    html = f"""<html><head><style>
@page {{ size: {w}pt {h}pt; margin: 0; }}
body {{ margin: 0; font-family: "DejaVu Sans", sans-serif; color: #1f3b5c; }}
div.s {{ border: 1.2pt solid #1f3b5c; height: {h - 8}pt; margin: 2pt; padding: 3pt 5pt;
        box-sizing: border-box; display: flex; flex-direction: column;
        justify-content: center; }}
p {{ margin: 0 0 2pt 0; font-size: 6.5pt; }}
p.n {{ font-size: 9pt; font-weight: bold; margin-bottom: 4pt; }}
p.r {{ font-size: 7.5pt; font-weight: bold; margin-top: 2pt; }}
</style></head><body><div class="s">
<p>Digitally sealed by</p><p class="n">{escape(name)}</p>
<p>{escape(stamp)}{" (time-stamped)" if tsa else ""}</p>
<p class="r">{escape(REASON)}</p></div></body></html>"""
    return weasyprint.HTML(string=html).write_pdf(pdf_variant="pdf/a-3b")


# ---------------------------------------------------------------- sealing


def seal_bytes(data: bytes, key: SealKey, *, where: str = "package",
               tsa_url: str | None = None, when: dt.datetime | None = None) -> bytes:
    """``data`` (a package) with a PAdES baseline signature appended as an incremental
    update, in a signature field over the cover's seal box. The original bytes are kept
    as they are: the signed revision starts with them."""
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
    from pyhanko.sign import fields, signers, timestamps
    from pyhanko.stamp import StaticStampStyle

    if seals_of(data):
        raise SealError(Problem(where, "the package is already sealed; build a new revision"
                                " to seal it again"))
    page, box = seal_box(data, where)
    when = when or dt.datetime.now(dt.UTC)
    face = _appearance(key.name, when, (box[2] - box[0], box[3] - box[1]), bool(tsa_url))
    import tempfile

    with tempfile.NamedTemporaryFile(suffix=".pdf") as tmp:
        tmp.write(face)
        tmp.flush()
        style = StaticStampStyle.from_pdf_file(tmp.name, border_width=0)
        meta = signers.PdfSignatureMetadata(
            field_name=FIELD_NAME, reason=REASON, name=key.name, md_algorithm="sha256",
            subfilter=fields.SigSeedSubFilter.PADES, certify=True,
            docmdp_permissions=fields.MDPPerm.NO_CHANGES)
        stamper = timestamps.HTTPTimeStamper(tsa_url, timeout=20) if tsa_url else None
        spec = fields.SigFieldSpec(FIELD_NAME, on_page=page,
                                   box=tuple(round(v, 2) for v in box))
        writer = IncrementalPdfFileWriter(io.BytesIO(data), strict=False)
        out = io.BytesIO()
        try:
            signers.PdfSigner(meta, key.signer, timestamper=stamper, stamp_style=style,
                              new_field_spec=spec).sign_pdf(writer, output=out)
        except Exception as exc:  # the TSA unreachable, a key the library refuses
            if tsa_url and "timestamp" in f"{type(exc).__name__} {exc}".lower():
                raise SealError(Problem(where, f"the time-stamp authority {tsa_url} did not"
                                        f" answer with a time stamp: {exc}",
                                        field="--tsa-url")) from None
            raise SealError(Problem(where, f"signing failed: {type(exc).__name__}: {exc}")
                            ) from None
    sealed = out.getvalue()
    if not sealed.startswith(data):
        raise SealError(Problem(where, "signing rewrote the package instead of appending"))
    return sealed


# ---------------------------------------------------------------- reading seals back


@dataclasses.dataclass(frozen=True, kw_only=True)
class SealState:
    """One seal of a package, as verify reports it."""

    field: str
    signer: str
    time: str  # the signing time the signature states (or its time stamp's)
    time_stamped: bool
    intact: bool  # the signed bytes are unchanged (their digest matches)
    valid: bool  # the signature value matches the signer's key
    covers_file: bool  # nothing follows the signed revision
    resaved: bool  # the file was rewritten: the signed bytes are no longer in it
    signed_length: int  # bytes of the signed revision (its last byte offset + 1)
    later_revisions: int
    trust: str  # what is known of the certificate's issuer
    problems: tuple[str, ...] = ()

    @property
    def holds(self) -> bool:
        return self.intact and self.valid and self.covers_file and not self.problems


def seals_of(data: bytes) -> list[Any]:
    """pyHanko's embedded signatures of ``data`` ([] for an unsealed PDF)."""
    from pyhanko.pdf_utils.reader import PdfFileReader

    try:
        return list(PdfFileReader(io.BytesIO(data), strict=False).embedded_signatures)
    except Exception:
        return []


def _resaved(data: bytes, byte_range: list[int], contents: bytes) -> bool:
    """Whether the byte range no longer frames the signature's own /Contents: the file was
    rewritten by a tool (the seal covered bytes that are no longer where it says)."""
    a, b, c, d = byte_range
    if c + d > len(data) or b >= len(data):
        return True
    hole = data[a + b:c]
    return hole.strip(b"<>").rstrip(b"0").lower() != contents.hex().rstrip("0").encode()


def seal_states(data: bytes) -> list[SealState]:
    """Every seal of the package in ``data``, validated (no network, no trust list)."""
    import logging

    from pyhanko.pdf_utils.reader import PdfFileReader
    from pyhanko.sign.validation import validate_pdf_signature
    from pyhanko_certvalidator import ValidationContext

    # a self-signed certificate is reported below; the library's log would repeat it
    for name in ("pyhanko", "pyhanko_certvalidator"):
        logging.getLogger(name).setLevel(logging.CRITICAL)
    reader = PdfFileReader(io.BytesIO(data), strict=False)
    total = reader.xrefs.total_revisions
    out = []
    for emb in reader.embedded_signatures:
        problems: list[str] = []
        byte_range = [int(v) for v in emb.sig_object["/ByteRange"]]
        contents = bytes(emb.sig_object["/Contents"])
        signed_length = byte_range[2] + byte_range[3]
        resaved = _resaved(data, byte_range, contents)
        cert = emb.signer_cert
        vc = ValidationContext(trust_roots=[], allow_fetching=False,
                               revocation_mode="soft-fail")
        intact = valid = False
        signer = common_name(cert) if cert is not None else "unknown"
        when = ""
        stamped = False
        try:
            status = validate_pdf_signature(emb, vc, skip_diff=True)
            intact, valid = bool(status.intact), bool(status.valid)
            stamped = status.timestamp_validity is not None
            t = (status.timestamp_validity.timestamp if stamped
                 else status.signer_reported_dt)
            when = t.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC") if t else ""
        except Exception as exc:
            problems.append(f"the signature cannot be read: {type(exc).__name__}: {exc}")
        later = 0 if resaved else max(0, total - 1 - emb.signed_revision)
        if cert is not None and cert.self_signed:
            trust = "self-signed certificate: confirm it with the signer's firm"
        elif cert is not None:
            trust = (f"issued by {cert.issuer.human_friendly}; not checked against a"
                     " trust list here")
        else:
            trust = "no signer certificate"
        out.append(SealState(field=str(emb.field_name), signer=signer, time=when,
                             time_stamped=stamped, intact=intact and not resaved,
                             valid=valid, covers_file=signed_length == len(data) and
                             not resaved, resaved=resaved, signed_length=signed_length,
                             later_revisions=later, trust=trust, problems=tuple(problems)))
    return out


def describe(state: SealState) -> list[str]:
    """What verify prints about one seal: a first line, then any failure, each a line."""
    when = state.time or "at no stated time"
    head = (f"seal '{state.field}' by {state.signer}, signed {when}"
            + (" (RFC 3161 time stamp)" if state.time_stamped else ""))
    lines = [head]
    if state.resaved:
        lines.append("the file was re-saved or rewritten after sealing: it is no longer"
                     " covered by its seal (a seal covers the exact bytes it signed)")
        return lines
    if not state.intact:
        lines.append("BROKEN: the signed bytes were altered after sealing (their digest no"
                     " longer matches the signature)")
    elif not state.valid:
        lines.append("FORGED or BROKEN: the signature value does not match the signer's"
                     " certificate")
    else:
        lines.append("intact: the sealed revision is unchanged and its signature is valid")
    if state.later_revisions or not state.covers_file:
        lines.append(f"CHANGED AFTER SEALING: {state.later_revisions or 'an'} incremental"
                     " update(s) appended after the seal; they are not covered by it")
    lines += list(state.problems)
    return lines


def signed_revision(data: bytes, state: SealState) -> bytes:
    """The bytes the seal covers (the file as it was when sealed)."""
    return data[:state.signed_length]


# ---------------------------------------------------------------- archival checks


def archival_problems(data: bytes, embedded: list[str]) -> list[str]:
    """What breaks the package's PDF/A-3b marks or its embedded files (the project's own
    checks, as the build's self-check and the archive tests make them)."""
    import pikepdf

    from reportgen.render.selfcheck import page_attachments

    out = []
    with pikepdf.open(io.BytesIO(data)) as pdf:
        meta = pdf.open_metadata()
        if meta.pdfa_status != "3B":
            out.append(f"PDF/A identification is {meta.pdfa_status or 'missing'}, not 3B")
        intents = pdf.Root.get("/OutputIntents", [])
        if not intents or "/DestOutputProfile" not in intents[0]:
            out.append("the output intent (colour profile) is missing")
        names = sorted(str(n) for n in pdf.attachments)
        if names != sorted(embedded):
            out.append(f"the embedded files are {names}, expected {sorted(embedded)}")
        af = {s.objgen for s in pdf.Root.get("/AF", []) if s.is_indirect}
        for name, spec in pdf.attachments.items():
            if spec.obj.objgen not in af:
                out.append(f"embedded file {name} is not in the catalogue's /AF")
        out += [f"file {n} is attached to a page" for n in page_attachments(pdf)]
        form = pdf.Root.get("/AcroForm")
        if form is not None and bool(form.get("/NeedAppearances", False)):
            out.append("the form asks readers to draw its appearances (NeedAppearances)")
        for number, page in enumerate(pdf.pages, start=1):
            for annot in page.obj.get("/Annots", ()):
                if annot.get("/Subtype") == "/Link":
                    continue
                if not int(annot.get("/F", 0)) & 4:
                    out.append(f"an annotation on page {number} is not set to print")
                ap = annot.get("/AP")
                if ap is None or "/N" not in ap:
                    out.append(f"an annotation on page {number} has no appearance")
    return out


# ---------------------------------------------------------------- a test certificate


def make_test_key(common_name: str, organisation: str, passphrase: bytes | None,
                  *, pem: bool = False) -> bytes:
    """A fresh self-signed key and certificate for demonstrations and tests, as PKCS#12
    (or PEM: key then certificate). Never a firm's real seal: it is made on the spot."""
    from cryptography import x509
    from cryptography.hazmat.primitives import hashes, serialization
    from cryptography.hazmat.primitives.asymmetric import ec
    from cryptography.hazmat.primitives.serialization import pkcs12
    from cryptography.x509.oid import NameOID

    key = ec.generate_private_key(ec.SECP256R1())
    name = x509.Name([x509.NameAttribute(NameOID.COMMON_NAME, common_name),
                      x509.NameAttribute(NameOID.ORGANIZATION_NAME, organisation)])
    start = dt.datetime.now(dt.UTC) - dt.timedelta(days=1)
    cert = (x509.CertificateBuilder().subject_name(name).issuer_name(name)
            .public_key(key.public_key()).serial_number(x509.random_serial_number())
            .not_valid_before(start).not_valid_after(start + dt.timedelta(days=730))
            .add_extension(x509.KeyUsage(True, True, False, False, False, False, False,
                                         False, False), critical=True)
            .sign(key, hashes.SHA256()))
    crypt = (serialization.BestAvailableEncryption(passphrase) if passphrase
             else serialization.NoEncryption())
    if pem:
        return (key.private_bytes(serialization.Encoding.PEM,
                                  serialization.PrivateFormat.PKCS8, crypt)
                + cert.public_bytes(serialization.Encoding.PEM))
    return pkcs12.serialize_key_and_certificates(organisation.encode(), key, cert, None,
                                                 crypt)

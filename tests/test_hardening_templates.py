"""Issue 13, points 1, 2 and 4: firm templates run sandboxed and confined to their folder,
every file a job names follows one safe-path rule, logos are screened by an XML
allow-list, and a package embeds exactly the files its manifest lists.

Every refusal is checked the way a user meets it: exit 2, one message naming the file
(and line, or the job field), no traceback, and the output folder left as it was.
"""

from __future__ import annotations

import json
import os
import resource
import struct
import subprocess
import sys
import zlib
from pathlib import Path

import pikepdf
import pytest
from conftest import REPO

from reportgen.cli import main
from reportgen.testing import job_toml, make_job

PUMP = {"plugin": "free_vibration", "title": "Mounted pump",
        "inputs": {"mass": "100 kg", "stiffness": "400 kN/m"}}
COVER_BODY = '{% include "cover_body.html" %}\n'
SECRET = "not-for-the-package-7Q"
PASSWD = Path("/etc/passwd")


def _job(folder: Path, **package) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "job.toml"
    path.write_text(job_toml(make_job(PUMP, **package)), encoding="utf-8")
    return path


def _theme(folder: Path, files: dict[str, str | bytes]) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    for name, body in files.items():
        target = folder / name
        target.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(body, bytes):
            target.write_bytes(body)
        else:
            target.write_text(body, encoding="utf-8")
    return folder


@pytest.fixture
def case(tmp_path):
    """A job folder with a theme folder in it, a secret beside the job, and an output
    folder that already holds one file (a refused build must leave it as it was)."""
    root = tmp_path / "job"
    (root / "secret.txt").parent.mkdir(parents=True)
    (root / "secret.txt").write_text(SECRET + "\n", encoding="utf-8")
    (tmp_path / "outside.html").write_text(f"<p>{SECRET}</p>\n", encoding="utf-8")
    out = tmp_path / "out"
    out.mkdir()
    (out / "keep.txt").write_text("kept\n")
    return root, out


def _build(job: Path, out: Path, capsys, *extra: str) -> tuple[int, str]:
    code = main(["build", str(job), "--out", str(out), "--jobs", "1", *extra])
    return code, capsys.readouterr().err


def _refused(code: int, err: str, out: Path, *needles: str) -> None:
    assert code == 2, err
    assert "Traceback" not in err and "internal error" not in err, err
    for needle in needles:
        assert needle in err, (needle, err)
    assert sorted(p.name for p in out.iterdir()) == ["keep.txt"]
    assert SECRET not in err


def _themed_build(case, files: dict[str, str | bytes], capsys) -> tuple[int, str, Path]:
    root, out = case
    _theme(root / "theme", files)
    code, err = _build(_job(root, template_dir="theme"), out, capsys)
    return code, err, out


# ---------------------------------------------------------------- sandbox

@pytest.mark.parametrize("payload", [
    '{{ cycler.__init__.__globals__.os.popen("id").read() }}',
    "{{ ''.__class__.__mro__[1].__subclasses__() }}",
    "{{ doc.__class__.__init__.__globals__ }}",
    "{{ lipsum.__globals__['os'] }}",
    "{{ info.title.__class__.mro() }}",
    "{{ [].append(1) }}",  # the sandbox is immutable: templates cannot change what they get
])
def test_a_template_reaching_for_the_interpreter_exits_2_naming_file_and_line(
        payload, case, capsys):
    # jinja2.sandbox (the template engine's own sandbox) raises SecurityError for these
    code, err, out = _themed_build(case, {"cover.html": "<p>cover</p>\n" + payload + "\n"
                                          + COVER_BODY}, capsys)
    _refused(code, err, out, "theme/cover.html", "line 2", "sandboxed")
    assert "uid=" not in err


def test_a_sandbox_refusal_raised_in_the_split_child_comes_back_as_exit_2(tmp_path):
    # a real process: the build forks (the pipeline scheduler) and the error crosses the pipe
    root = tmp_path / "job"
    _theme(root / "theme", {"cover.html": '{{ cycler.__init__.__globals__.os.popen("id")'
                                          '.read() }}\n' + COVER_BODY})
    job = _job(root, template_dir="theme")
    run = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(job), "--out",
                          str(tmp_path / "out")], capture_output=True, text=True, timeout=300)
    assert run.returncode == 2, run.stderr
    assert "cover.html: line 1" in run.stderr and "Traceback" not in run.stderr
    assert "uid=" not in run.stdout + run.stderr
    assert not (tmp_path / "out").exists()


# ---------------------------------------------------------------- confined loading

def test_a_template_that_is_a_symlink_to_a_file_outside_is_refused(case, capsys):
    root, out = case
    theme = _theme(root / "theme", {})
    (theme / "cover.html").symlink_to(root.parent / "outside.html")
    code, err = _build(_job(root, template_dir="theme"), out, capsys)
    _refused(code, err, out, "theme/cover.html", "symbolic link")


@pytest.mark.skipif(not PASSWD.is_file(), reason="needs /etc/passwd as a target")
def test_a_running_header_symlinked_to_etc_passwd_is_refused(case, capsys):
    root, out = case
    theme = _theme(root / "theme", {})
    (theme / "running.html").symlink_to(PASSWD)
    code, err = _build(_job(root, template_dir="theme"), out, capsys)
    _refused(code, err, out, "theme/running.html", "symbolic link")
    assert "root:" not in err


@pytest.mark.parametrize("name", ["../../etc/passwd", "/etc/passwd", "../outside.html",
                                  "sub/../../outside.html", "..\\outside.html"])
def test_an_include_that_leaves_the_theme_folder_is_refused(name, case, capsys):
    code, err, out = _themed_build(case, {"cover.html": "<p>head</p>\n\n{% include "
                                          + json.dumps(name) + " %}\n" + COVER_BODY,
                                          "sub/x.html": "x"}, capsys)
    _refused(code, err, out, "theme/cover.html", "line 3", "leaves the theme folder")
    assert "root:" not in err


def test_extends_and_import_are_confined_too(case, capsys):
    code, err, out = _themed_build(case, {"cover.html": '{% import "../outside.html" as x %}'
                                          + COVER_BODY}, capsys)
    _refused(code, err, out, "theme/cover.html", "leaves the theme folder")
    root, _ = case
    (root / "theme" / "cover.html").write_text('{% extends "/etc/passwd" %}\n')
    code, err = _build(root / "job.toml", out, capsys)
    _refused(code, err, out, "theme/cover.html", "leaves the theme folder")


def test_a_missing_include_names_it_and_the_template_that_included_it(case, capsys):
    code, err, out = _themed_build(case, {"cover.html": "<p>a</p>\n<p>b</p>\n"
                                          '{% include "our_header.html" %}\n' + COVER_BODY},
                                   capsys)
    _refused(code, err, out, "theme/cover.html", "line 3", "'our_header.html' not found")


def test_an_ignore_missing_include_does_not_hide_a_refused_file(case, capsys):
    # package.html includes firm.css "ignore missing": a link there is refused, not skipped
    root, out = case
    theme = _theme(root / "theme", {})
    (theme / "firm.css").symlink_to(root / "secret.txt")
    code, err = _build(_job(root, template_dir="theme"), out, capsys)
    _refused(code, err, out, "theme/firm.css", "symbolic link", "package.html")


def test_a_template_syntax_error_in_a_theme_names_file_and_line(case, capsys):
    code, err, out = _themed_build(case, {"cover.html": "<p>a</p>\n{% if %}\n" + COVER_BODY},
                                   capsys)
    _refused(code, err, out, "theme/cover.html", "line 2", "syntax error")


# ---------------------------------------------------------------- bounded theme files

def _limited(limit_bytes: int):
    def apply():  # runs in the child before exec: a hard cap on its address space
        resource.setrlimit(resource.RLIMIT_AS, (limit_bytes, limit_bytes))
    return apply


def _run_capped(job: Path, out: Path) -> subprocess.CompletedProcess:
    # 4 GiB of address space: enough for the build (about 1 GiB), not for reading the
    # sparse 1.5 GB file into memory and decoding it, which is what happened before
    return subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(job), "--out",
                           str(out)], capture_output=True, text=True, timeout=300,
                          preexec_fn=_limited(4 << 30))


def test_a_1_5_gb_stylesheet_is_refused_without_reading_it(case):
    root, out = case
    theme = _theme(root / "theme", {})
    with open(theme / "style.css", "wb") as f:
        f.truncate(1_500_000_000)  # sparse: costs no disk
    run = _run_capped(_job(root, template_dir="theme"), out)
    assert run.returncode == 2, run.stderr
    assert "theme/style.css" in run.stderr and "1500000000 bytes" in run.stderr
    assert "at most 2000000 bytes" in run.stderr
    assert "MemoryError" not in run.stderr and "Traceback" not in run.stderr
    assert sorted(p.name for p in out.iterdir()) == ["keep.txt"]


def test_a_huge_file_a_stylesheet_fetches_is_refused_without_reading_it(case):
    # firm CSS reaches WeasyPrint inline; its url() fetches files of the job's folder
    root, out = case
    _theme(root / "theme", {"firm.css": "body { background: url(huge.png); }\n"})
    with open(root / "huge.png", "wb") as f:
        f.truncate(1_500_000_000)
    run = _run_capped(_job(root, template_dir="theme"), out)
    assert run.returncode == 2, run.stderr
    assert "huge.png" in run.stderr and "the limit is 10000000" in run.stderr
    assert "MemoryError" not in run.stderr and "Traceback" not in run.stderr
    assert sorted(p.name for p in out.iterdir()) == ["keep.txt"]


def test_the_fetcher_refuses_a_symlink_inside_the_job_folder(tmp_path):
    from weasyprint.urls import FatalURLFetchingError

    from reportgen.render.pdf import _fetcher_class

    (tmp_path / "real.svg").write_text('<svg xmlns="http://www.w3.org/2000/svg"/>')
    (tmp_path / "alias.svg").symlink_to(tmp_path / "real.svg")  # inside, but a link
    fetcher = _fetcher_class()(tmp_path)
    assert b"<svg" in fetcher.fetch((tmp_path / "real.svg").as_uri()).read()
    with pytest.raises(FatalURLFetchingError, match="refused"):
        fetcher.fetch((tmp_path / "alias.svg").as_uri())


# ---------------------------------------------------------------- template_dir, --template-dir

@pytest.mark.parametrize("where", ["../theme", "ABS", "linked", "sub/linked"])
def test_template_dir_must_be_a_real_folder_inside_the_jobs_folder(where, tmp_path, capsys):
    theme = _theme(tmp_path / "theme", {"firm.css": "p { color: red; }\n"})
    root = tmp_path / "job"
    (root / "sub").mkdir(parents=True)
    (root / "linked").symlink_to(theme)
    (root / "sub" / "linked").symlink_to(theme)
    job = _job(root, template_dir=str(theme) if where == "ABS" else where)
    assert main(["check", str(job)]) == 2
    err = capsys.readouterr().err
    assert "package.template_dir" in err and str(job) in err and "Traceback" not in err
    out = tmp_path / "out"
    out.mkdir()
    code, err = _build(job, out, capsys)
    assert code == 2 and "package.template_dir" in err
    assert not any(out.iterdir())


def test_a_symlinked_folder_on_the_way_to_template_dir_is_refused(tmp_path, capsys):
    theme = _theme(tmp_path / "elsewhere" / "theme", {"firm.css": "p { color: red; }\n"})
    root = tmp_path / "job"
    root.mkdir()
    (root / "themes").symlink_to(theme.parent)
    job = _job(root, template_dir="themes/theme")
    assert main(["check", str(job)]) == 2
    err = capsys.readouterr().err
    assert "package.template_dir" in err and "symbolic link" in err


def _png(width: int, height: int) -> bytes:
    """A PNG by the PNG specification (W3C/ISO 15948): signature, IHDR, IDAT, IEND."""
    def chunk(kind: bytes, data: bytes) -> bytes:
        return (struct.pack(">I", len(data)) + kind + data
                + struct.pack(">I", zlib.crc32(kind + data)))

    rows = b"".join(b"\x00" + b"\x10\x60\x50" * width for _ in range(min(height, 4)))
    return (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", width, height, 8, 2,
                                                              0, 0, 0))
            + chunk(b"IDAT", zlib.compress(rows)) + chunk(b"IEND", b""))


CLEAN_LOGO = ('<?xml version="1.0" encoding="UTF-16"?>\n'
              '<svg xmlns="http://www.w3.org/2000/svg" width="120" height="30"'
              ' viewBox="0 0 120 30"><defs><linearGradient id="g"><stop offset="0"'
              ' stop-color="#0a4"/></linearGradient></defs>'
              '<rect width="30" height="30" fill="url(#g)"/>'
              '<text x="36" y="21" font-family="DejaVu Sans" font-size="14">'
              'Ashgrove</text></svg>')


def test_command_line_template_dir_may_be_anywhere_and_a_clean_utf16_logo_renders(
        tmp_path, capsys):
    """--template-dir is the user's own choice: an absolute folder outside the job's.

    The package built with it embeds exactly its manifest's files, and `extract` and
    `verify` see exactly what is embedded.
    """
    theme = _theme(tmp_path / "elsewhere" / "our theme", {
        "firm.css": '@page { @bottom-left { content: "Ashgrove form V-7"; } }\n',
        "logo.svg": CLEAN_LOGO.encode("utf-16")})
    root = tmp_path / "job"
    job = _job(root, firm="Ashgrove Dynamics")
    out = tmp_path / "out"
    code, err = _build(job, out, capsys, "--template-dir", str(theme.resolve()))
    assert code == 0, err
    pdf = out / "T-1-001-A.pdf"
    from reportgen.render.selfcheck import extract_text

    _, text = extract_text(pdf.read_bytes())
    assert "Ashgrove form V-7" in text  # the firm's stylesheet applied
    assert "Ashgrove" in text.replace("Ashgrove form V-7", "")  # the logo's own text
    with pikepdf.open(pdf) as doc:
        names = sorted(str(n) for n in doc.attachments)
        streams = sum(1 for o in doc.objects if isinstance(o, pikepdf.Stream)
                      and o.get("/Type") == "/EmbeddedFile")
        manifest = json.loads(doc.attachments["manifest.json"].get_file().read_bytes())
    assert names == ["environment.lock", "job.toml", "manifest.json", "results.json"]
    assert streams == len(names)  # an independent count: every embedded stream is listed
    assert manifest["attachments"] == []
    dest = tmp_path / "extracted"
    assert main(["extract", str(pdf), str(dest)]) == 0
    assert sorted(p.name for p in dest.iterdir()) == names
    capsys.readouterr()
    assert main(["verify", str(pdf)]) == 0, capsys.readouterr()


# ---------------------------------------------------------------- previous_package

@pytest.mark.parametrize("where", ["ABS", "../prev.pdf", "linked.pdf", "sub/prev.pdf"])
def test_previous_package_follows_the_same_rule(where, tmp_path, capsys):
    outside = tmp_path / "prev.pdf"
    outside.write_bytes(b"%PDF-1.7\n% a previous package would be here\n")
    root = tmp_path / "job"
    root.mkdir()
    (root / "linked.pdf").symlink_to(outside)
    (root / "sub").symlink_to(tmp_path)  # a linked folder on the way
    job = _job(root, previous_package=str(outside) if where == "ABS" else where)
    assert main(["check", str(job)]) == 2
    err = capsys.readouterr().err
    assert "package.previous_package" in err and str(job) in err and "Traceback" not in err
    out = tmp_path / "out"
    code, err = _build(job, out, capsys)
    assert code == 2 and "package.previous_package" in err
    assert not out.exists()


# ---------------------------------------------------------------- logos

SCRIPT = '<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>'
IMAGE = ('<svg xmlns="http://www.w3.org/2000/svg" width="9" height="9">'
         '<image href="file:///etc/passwd" width="9" height="9"/></svg>')


@pytest.mark.parametrize("body, found", [
    (SCRIPT.encode("utf-16"), "<script>"),  # BOM, no declaration
    (('<?xml version="1.0" encoding="UTF-16"?>' + IMAGE).encode("utf-16"), "<image>"),
    (('<?xml version="1.0" encoding="UTF-16LE"?>' + SCRIPT).encode("utf-16-le"), "<script>"),
    (('<?xml version="1.0" encoding="UTF-16BE"?>' + IMAGE).encode("utf-16-be"), "<image>"),
    (SCRIPT.encode("utf-8"), "<script>"),
    (b"\xef\xbb\xbf" + IMAGE.encode("utf-8"), "<image>"),
    (b'<svg xmlns="http://www.w3.org/2000/svg" xmlns:q="urn:q"><q:image href="x.png"/></svg>',
     "<image> (namespace urn:q)"),  # the renderer ignores namespaces: so does the screen
    (b'<svg xmlns="http://www.w3.org/2000/svg"><rect onload="alert(1)"/></svg>', "'onload'"),
    (b'<svg xmlns="http://www.w3.org/2000/svg"><g><use href="other.svg#a"/></g></svg>',
     "a link outside the logo"),
    (b'<svg xmlns="http://www.w3.org/2000/svg"><rect style="fill: u\\72l(x.svg)"/></svg>',
     "a CSS escape"),
    (b'<svg xmlns="http://www.w3.org/2000/svg"><rect fill="URL( \'x.svg#p\' )"/></svg>',
     "url(x.svg#p)"),
    (b'<svg xmlns="http://www.w3.org/2000/svg"><style>@import "x.css";</style></svg>',
     "a CSS at-rule"),
    (b'<!DOCTYPE svg [<!ENTITY a "b">]><svg xmlns="http://www.w3.org/2000/svg"/>', "DTD"),
    (b"<svg xmlns='http://www.w3.org/2000/svg'>" + b"<g>" * 100 + b"</g>" * 100 + b"</svg>",
     "nested more than"),
    (b"<html><body/></html>", "<html>"),
])
def test_an_unsafe_svg_logo_is_refused_whatever_its_encoding(body, found, case, capsys):
    code, err, out = _themed_build(case, {"logo.svg": body}, capsys)
    _refused(code, err, out, "theme/logo.svg", "firm logo refused", found)


@pytest.mark.parametrize("body, found", [
    (b"GIF89a not a png at all", "not a PNG"),
    (_png(100_000, 100_000), "at most 25000000 pixels"),  # a tiny file, a huge picture
])
def test_a_png_logo_is_checked(body, found, case, capsys):
    code, err, out = _themed_build(case, {"logo.png": body}, capsys)
    _refused(code, err, out, "theme/logo.png", found)


def test_a_logo_symlink_or_oversize_logo_is_refused_not_skipped(case, capsys):
    root, out = case
    theme = _theme(root / "theme", {})
    (theme / "logo.svg").symlink_to(REPO / "sample_jobs" / "quillmoor_theme" / "logo.svg")
    code, err = _build(_job(root, template_dir="theme"), out, capsys)
    _refused(code, err, out, "theme/logo.svg", "symbolic link")
    (theme / "logo.svg").unlink()
    (theme / "logo.png").write_bytes(_png(8, 8) + b"\0" * 2_000_000)
    code, err = _build(root / "job.toml", out, capsys)
    _refused(code, err, out, "theme/logo.png", "at most 2000000 bytes")


def test_a_clean_png_logo_is_accepted():
    import base64
    import tempfile

    from reportgen.render.logo import firm_logo

    with tempfile.TemporaryDirectory() as folder:
        (Path(folder) / "logo.png").write_bytes(_png(8, 8))
        uri = firm_logo(Path(folder))
    assert base64.b64decode(uri.split(",", 1)[1]) == _png(8, 8)


def test_the_sample_theme_logo_passes_the_screen_byte_for_byte():
    import base64

    from reportgen.render.logo import firm_logo

    theme = REPO / "sample_jobs" / "quillmoor_theme"
    uri = firm_logo(theme)
    assert base64.b64decode(uri.split(",", 1)[1]) == (theme / "logo.svg").read_bytes()


# ---------------------------------------------------------------- rel="attachment"

@pytest.mark.parametrize("template, markup, named", [
    ("cover.html", '<a rel="attachment" href="secret.txt">survey</a>\n', "cover.html"),
    ("cover.html", '<a href="secret.txt" REL="nofollow Attachment">s</a>\n', "cover.html"),
    ("running.html", '<link rel="attachment" href="secret.txt">\n', "running.html"),
    # built by the template at render time: the renderer-level refusal names the theme
    ("cover.html", '<a rel="{{ "attach" ~ "ment" }}" href="secret.txt">s</a>\n', "theme"),
])
def test_a_template_cannot_embed_a_file_of_the_job_folder(template, markup, named, case,
                                                           capsys):
    root, _ = case
    files = {template: markup + (COVER_BODY if template == "cover.html" else
                                 (REPO / "templates" / "running.html").read_text())}
    code, err, out = _themed_build(case, files, capsys)
    _refused(code, err, out, f"theme/{named}" if named != "theme" else str(root / "theme"),
             "attachment")


def test_the_renderer_refuses_rel_attachment_whatever_made_the_html(tmp_path):
    from reportgen.errors import RenderError
    from reportgen.render.pdf import write_pdf

    (tmp_path / "secret.txt").write_text(SECRET)
    for markup in ('<p><a rel="attachment" href="secret.txt">x</a></p>',
                   '<svg xmlns="http://www.w3.org/2000/svg"><a rel="attachment"'
                   ' href="secret.txt"><text>x</text></a></svg>',
                   '<p><a rel=" ATTACHMENT " href="secret.txt">x</a></p>'):
        with pytest.raises(RenderError, match="refused to embed 'secret.txt'"):
            write_pdf(f"<html><body>{markup}</body></html>", base_dir=tmp_path,
                      attachments=[], date="2026-12-01")


def _with_page_attachment(src: Path, dest: Path, data: bytes) -> None:
    """``src`` with a file attached to its first page (as WeasyPrint does for <a rel>)."""
    with pikepdf.open(src) as pdf:
        spec = pikepdf.AttachedFileSpec(pdf, data, filename="secret.txt")
        annot = pdf.make_indirect(pikepdf.Dictionary(
            Type=pikepdf.Name.Annot, Subtype=pikepdf.Name.FileAttachment,
            Rect=[0, 0, 10, 10], FS=spec.obj))
        page = pdf.pages[0].obj
        if "/Annots" not in page:
            page.Annots = pdf.make_indirect(pikepdf.Array())
        page.Annots.append(annot)
        pdf.save(dest)


@pytest.fixture(scope="module")
def plain_package(tmp_path_factory):
    from reportgen.calc.plugin_set import load_plugin_set
    from reportgen.pipeline.plan import BuildOptions, build_job

    root = tmp_path_factory.mktemp("plain")
    job = _job(root / "job")
    result = build_job(job, load_plugin_set(),
                       BuildOptions(out_dir=root / "out", use_cache=False, workers=1))
    return result.pdf


def test_the_self_check_refuses_a_pdf_whose_embedded_files_differ_from_the_manifest(
        plain_package, tmp_path):
    from reportgen.errors import RenderError
    from reportgen.render.selfcheck import self_check
    from reportgen.testing import compute

    doc = compute(make_job(PUMP))
    listed = ["environment.lock", "job.toml", "manifest.json", "results.json"]
    self_check(plain_package.read_bytes(), doc, embedded=listed)  # the honest PDF passes
    with pytest.raises(RenderError, match="the manifest lists"):
        self_check(plain_package.read_bytes(), doc, embedded=listed + ["survey.csv"])
    hidden = tmp_path / "hidden.pdf"
    _with_page_attachment(plain_package, hidden, SECRET.encode())
    with pytest.raises(RenderError, match="secret.txt .page 1. is attached to a page"):
        self_check(hidden.read_bytes(), doc, embedded=listed)


def test_verify_and_extract_see_a_file_attached_to_a_page(plain_package, tmp_path, capsys):
    hidden = tmp_path / "hidden.pdf"
    _with_page_attachment(plain_package, hidden, SECRET.encode())
    assert main(["verify", str(hidden)]) == 2
    err = capsys.readouterr().err
    assert "secret.txt (page 1) is attached to a page and not listed" in err
    assert main(["extract", str(hidden), str(tmp_path / "x")]) == 0
    assert "secret.txt (page 1) is attached to a page" in capsys.readouterr().err


# ---------------------------------------------------------------- the rule itself

@pytest.mark.parametrize("text", [
    "", "  ", "/etc/passwd", "\\\\server\\share\\x", "C:\\x.csv", "C:x.csv", "c:/x",
    "../x", "a/../../x", "a/./b", "./a", "a//b", "a\\..\\..\\x", "x\0.csv", "x\n.csv",
    "x\x1b.csv", "x\x7f", "file:///etc/passwd", 5, None, ["a"],
])
def test_path_parts_refuses_what_leaves_the_folder(text):
    from reportgen.job.paths import UnsafePath, path_parts

    with pytest.raises(UnsafePath):
        path_parts(text)


def test_path_parts_accepts_plain_relative_names():
    from reportgen.job.paths import path_parts

    assert path_parts("survey/p1 readings.csv") == ("survey", "p1 readings.csv")
    assert path_parts("sub\\x.csv") == ("sub", "x.csv")
    assert path_parts("theme/", kind="folder") == ("theme",)


def test_job_relative_path_checks_type_and_never_blocks_on_a_fifo(tmp_path):
    from reportgen.errors import JobError
    from reportgen.job.paths import job_relative_path, read_job_file

    (tmp_path / "d").mkdir()
    (tmp_path / "f.csv").write_text("1\n")
    os.mkfifo(tmp_path / "pipe.csv")
    assert job_relative_path(tmp_path, "d", "x", kind="folder") == tmp_path.resolve() / "d"
    assert read_job_file(tmp_path, "f.csv", "x", limit=10) == b"1\n"
    for text, kind, message in [("d", "file", "not a regular file"),
                                ("f.csv", "folder", "not a folder"),
                                ("pipe.csv", "file", "not a regular file"),
                                ("f.csv/x", "file", "not a folder"),
                                ("nope", "file", "not found")]:
        with pytest.raises(JobError, match=message) as err:
            job_relative_path(tmp_path, text, "package.x", kind=kind, file="job.toml")
        assert err.value.problems[0].field == "package.x"
    with pytest.raises(JobError, match="the limit for one file is 1 bytes"):
        read_job_file(tmp_path, "f.csv", "x", limit=1)


def test_docs_state_the_theme_file_limit():
    text = (REPO / "DEVELOPERS.md").read_text(encoding="utf-8")
    from reportgen.render.theme import THEME_FILE_LIMIT

    assert f"{THEME_FILE_LIMIT // 1_000_000} MB" in text and "sandbox" in text


def test_the_sample_theme_holds_regular_files_only():
    # a link there would now be refused when the sample set builds
    for path in (REPO / "sample_jobs" / "quillmoor_theme").iterdir():
        assert path.is_file() and not path.is_symlink(), path

"""Translate a final Document into one self-contained HTML string with Jinja2.

Templates receive only the document and display helpers: no calculators, autoescape
on, StrictUndefined. A firm's template folder overrides any built-in template by name.
"""

from __future__ import annotations

import base64
import math
from collections.abc import Mapping
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

from markupsafe import Markup, escape

from reportgen.formula import _GREEK
from reportgen.model import BLOCK_TYPES, Check, Document, Matrix, Quantity, VerificationRow
from reportgen.units import DIMENSIONS, display_units, format_number

_GREEK_CHARS = {
    "alpha": "α", "beta": "β", "gamma": "γ", "delta": "δ", "epsilon": "ε", "zeta": "ζ",
    "eta": "η", "theta": "θ", "kappa": "κ", "lambda": "λ", "mu": "μ", "nu": "ν", "xi": "ξ",
    "pi": "π", "rho": "ρ", "sigma": "σ", "tau": "τ", "phi": "φ", "chi": "χ", "psi": "ψ",
    "omega": "ω", "Gamma": "Γ", "Delta": "Δ", "Theta": "Θ", "Lambda": "Λ", "Phi": "Φ",
    "Psi": "Ψ", "Omega": "Ω",
}
assert set(_GREEK_CHARS) == _GREEK

COMPARISON_WORDS = {"<=": "≤", ">=": "≥", "<": "<", ">": ">", "≈": "≈", "=": "="}


def builtin_templates() -> Path:
    return Path(str(resources.files("reportgen_templates")))


def symbol_html(name: str) -> Markup:
    """``omega_n`` -> ``ω<sub>n</sub>`` (escaped)."""
    if not name:
        return Markup("")
    base, _, sub = name.partition("_")
    head = _GREEK_CHARS.get(base, base)
    out = Markup("<i>{}</i>").format(head) if len(head) == 1 and head.isascii() else escape(head)
    if sub:
        subs = ",".join(_GREEK_CHARS.get(p, p) for p in sub.split("_"))
        out += Markup("<sub>{}</sub>").format(subs)
    return out


def quantity_parts(q: Quantity | None, units: str, digits: int = 4, *,
                   prefix: bool = True) -> tuple[str, str]:
    """(number, unit) as a table prints ``q``; ``units`` is a display key ("SI", "US",
    "SI;length=mm"), ``prefix=False`` keeps a table column's one unit."""
    if q is None:
        return ("", "")
    text, label = display_units(units).show(q.value, q.dimension, digits, prefix=prefix)
    return readable_number(text), label


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def readable_number(text: str) -> str:
    """``3.16e-5`` -> ``3.16×10⁻⁵`` for tables (results.json keeps full floats)."""
    if "e" not in text:
        return text
    mant, exp = text.split("e")
    return f"{mant}×10{str(int(exp)).translate(_SUPERSCRIPT)}"


@lru_cache(maxsize=1)
def _compiled() -> Any:
    """Templates compiled once per process (keyed by file and checked against the
    source's checksum, so an edited theme file is compiled again): a live preview renders
    on every save, and compiling the package's templates is a third of its time."""
    import jinja2

    class InMemory(jinja2.BytecodeCache):
        def __init__(self) -> None:
            self.code: dict[str, bytes] = {}

        def load_bytecode(self, bucket: jinja2.bccache.Bucket) -> None:
            if bucket.key in self.code:
                bucket.bytecode_from_string(self.code[bucket.key])

        def dump_bytecode(self, bucket: jinja2.bccache.Bucket) -> None:
            self.code[bucket.key] = bucket.bytecode_to_string()

    return InMemory()


def make_env(template_dir: Path | None, units: str, assets: Mapping[Any, str],
             extra_hook: Any = None):
    import jinja2
    from jinja2.sandbox import ImmutableSandboxedEnvironment

    from reportgen.render.theme import ThemeLoader

    loaders: list[jinja2.BaseLoader] = []
    if template_dir is not None:
        loaders.append(ThemeLoader(template_dir))
    loaders.append(jinja2.FileSystemLoader(str(builtin_templates())))
    # Sandboxed: a theme comes with a job file from anyone, and a template must not reach
    # the interpreter (cycler.__init__.__globals__ and the like) or alter what it is given.
    env = ImmutableSandboxedEnvironment(loader=jinja2.ChoiceLoader(loaders), autoescape=True,
                                        undefined=jinja2.StrictUndefined, trim_blocks=True,
                                        lstrip_blocks=True, bytecode_cache=_compiled())

    system = display_units(units).system  # templates see "SI" or "US"

    def qv(q: Quantity | None, digits: int = 4) -> str:
        return quantity_parts(q, units, digits)[0]

    def qu(q: Quantity | None) -> Markup:
        # a unit never breaks across lines in a narrow column ("lbf/" over "in")
        label = quantity_parts(q, units)[1]
        return Markup('<span style="white-space:nowrap">{}</span>').format(label) if (
            label) else Markup("")

    def qfull(q: Quantity | None, digits: int = 4) -> str:
        v, u = quantity_parts(q, units, digits)
        return f"{v} {u}".strip()

    def asset(block: Any) -> str:
        return assets[block]

    def vnum(x: float, dimension: str = "") -> str:
        """A verification value, in the package's unit for its dimension (6 figures)."""
        if dimension in DIMENSIONS:
            return readable_number(display_units(units).show(x, dimension, 6,
                                                             prefix=False)[0])
        return format_number(x, 6)

    def vrel(row: VerificationRow) -> str:
        r = row.rel_difference
        if r == 0:
            return "0"
        return "—" if not math.isfinite(r) else f"{r:.1e}"

    def comparison(c: Check) -> str:
        return COMPARISON_WORDS.get(c.comparison, c.comparison)

    def column_unit(dimension: str) -> str:
        label = quantity_parts(Quantity(value=1.0, dimension=dimension), units,
                               prefix=False)[1]
        return f" ({label})" if label else ""

    def header_html(text: str) -> Markup:
        """A column header whose trailing unit ("[lbf/in]", "(mm/s)") never wraps."""
        import re

        m = re.search(r"\s*([\[(][^\[\]()]*[\])])$", text)
        if not m:
            return escape(text)
        return Markup(f"{escape(text[:m.start()])} <span class=\"nowrap\">"
                      f"{escape(m.group(1))}</span>")

    def cell_is_number(cell: Any) -> bool:
        return isinstance(cell, (int, float, Quantity)) and not isinstance(cell, bool)

    def cell_text(cell: Any, dimension: str, digits: int = 4) -> str:
        """A table cell: text as it is, a number in the column's display unit (its unit
        is in the header), a Quantity with its own unit."""
        if cell is None:
            return ""
        if isinstance(cell, Quantity):
            v, u = quantity_parts(cell, units, digits)
            return f"{v} {u}".strip()
        if isinstance(cell, (int, float)) and not isinstance(cell, bool):
            return quantity_parts(Quantity(value=float(cell), dimension=dimension or
                                           "dimensionless"), units, digits, prefix=False)[0]
        return str(cell)

    def matrix_cell(m: Matrix, i: int, j: int) -> str:
        v, u = quantity_parts(Quantity(value=m.values[i][j], dimension=m.dimension(i, j)),
                              units, m.digits)
        return f"{v} {u}".strip() if len({m.dimension(a, b) for a in range(len(m.values))
                                          for b in range(len(m.values[a]))}) > 1 else v

    def matrix_unit(m: Matrix) -> str:
        dims = {m.dimension(a, b) for a in range(len(m.values))
                for b in range(len(m.values[a]))}
        return column_unit(dims.pop()) if len(dims) == 1 else ""

    env.globals.update(
        column_unit=column_unit, matrix_unit=matrix_unit, cell_is_number=cell_is_number,
        header_html=header_html,
        cell_text=cell_text, matrix_cell=matrix_cell,
        asset=asset, block_kind=lambda b: type(b).__name__, sym=symbol_html, qv=qv, qu=qu,
        q=qfull, vnum=vnum, vrel=vrel, comparison=comparison, units=system,
        dimension_label=lambda d: display_units(units).family_unit(d),
        si_label=lambda d: (display_units(units).unit(1.0, d, prefix=False)[1]
                            if d in DIMENSIONS else d),  # the unit vnum(x, d) is in
        block_types=[t.__name__ for t in BLOCK_TYPES],
    )
    if extra_hook is not None:
        extra_hook(env)
    return env


def display_key(doc: Document) -> str:
    """The key of the units ``doc`` is printed in (its system and the job's choices)."""
    return doc.info.display or doc.info.units


def data_uri(payload: bytes, mime: str = "image/svg+xml") -> str:
    return f"data:{mime};base64," + base64.b64encode(payload).decode("ascii")


def render_html(doc: Document, assets: Mapping[Any, str], *, template_dir: Path | None = None,
                logo: str | None = None, extra_hook: Any = None) -> str:
    import jinja2

    from reportgen.errors import ThemeError
    from reportgen.render.theme import template_failure

    env = make_env(template_dir, display_key(doc), assets, extra_hook)
    refs = references(doc)
    numbers = reference_numbers(doc, refs)
    env.globals.update(references=refs, ref_no=lambda text: numbers.get(text, 0),
                       is_document=is_document)
    env.filters["ref_no"] = lambda text: numbers.get(text, 0)
    try:
        template = env.get_template("package.html")
        mark = issue_mark(doc)
        html = template.render(doc=doc, info=doc.info, logo=logo,
                               watermark=watermark_uri(mark),
                               watermark_text=WATERMARKS.get(mark, ""))
    except (jinja2.TemplateError, ThemeError) as exc:
        raise template_failure(exc, template_dir, builtin_templates()) from exc
    css = getattr(assets, "css", "")  # the equations' math font (render.assets.Assets)
    if css:
        at = html.find("</head>")
        style = f"<style>{css}</style>\n"
        html = html[:at] + style + html[at:] if at >= 0 else style + html
    return html


def is_document(source: str) -> bool:
    """Whether an input's source names a document (not the job file or a default)."""
    return bool(source) and not source.startswith(("job file", "default", "derived"))


def _book(citation: str) -> tuple[str, str]:
    """A citation split into the work and the part cited (after the first ': ')."""
    work, sep, part = citation.partition(": ")
    return (work, part) if sep else (citation, "")


def references(doc: Document) -> list[str]:
    """Every document the package cites, once, in order of first citation: each calc
    type's published sources (one entry per work, its cited parts joined), then the
    documents the inputs name."""
    parts: dict[str, list[str]] = {}
    for s in doc.sections:
        for src in s.sources:
            work, part = _book(src.citation)
            cited = parts.setdefault(work, [])
            if part and part not in cited:
                cited.append(part.rstrip("."))
    out = [f"{w}: {'; '.join(p)}." if p else w for w, p in parts.items()]
    for s in doc.sections:
        for b in s.blocks:
            for row in getattr(b, "rows", ()) if type(b).__name__ == "InputsTable" else ():
                if is_document(row.source) and row.source not in out:
                    out.append(row.source)
    return out


def reference_numbers(doc: Document, refs: list[str]) -> dict[str, int]:
    """The number each citation (a plugin source or an input's document) is cited by."""
    works = [_book(r)[0] if i < len(refs) else r for i, r in enumerate(refs)]
    numbers: dict[str, int] = {}
    for s in doc.sections:
        for src in s.sources:
            work = _book(src.citation)[0]
            if work in works:
                numbers[src.citation] = works.index(work) + 1
    for i, r in enumerate(refs, start=1):
        numbers.setdefault(r, i)
    return numbers


WATERMARKS = {"preliminary": "PRELIMINARY – NOT CHECKED", "checked": "CHECKED – NOT APPROVED",
              "unaccepted": "NOT FIT TO ISSUE"}


def issue_mark(doc: Document) -> str:
    """The mark every page carries: the review state, or, for an approved package with a
    failing check that no deviation accepts, "unaccepted"; none when fit to issue."""
    if doc.review_state == "approved":
        return "unaccepted" if doc.unaccepted else ""
    return doc.review_state


def watermark_uri(review_state: str) -> str:
    """A page-sized SVG with the diagonal review mark, used as every page's background."""
    text = WATERMARKS.get(review_state)
    if not text:
        return ""
    svg = ('<svg xmlns="http://www.w3.org/2000/svg" width="210mm" height="297mm"'
           ' viewBox="0 0 210 297"><text x="105" y="160" text-anchor="middle"'
           ' font-family="DejaVu Sans" font-weight="bold" font-size="15"'
           ' fill="#a01e1e" fill-opacity="0.14" transform="rotate(-52 105 160)">'
           f'{text}</text></svg>')
    return data_uri(svg.encode("utf-8"))


def render_preview_frame(doc: Document | None, error: str | None, shown_at: str) -> str:
    """The live preview's banner and check panel (built-in template ``preview.html``,
    never a firm's: the frame is not part of the package)."""
    env = make_env(None, display_key(doc) if doc is not None else "SI", {}, None)
    return env.get_template("preview.html").render(doc=doc, error=error, shown_at=shown_at)

"""What every page kind of the site shares: conventions, typesetting of expressions and Markdown,
the labels readers see, and the small data rows used on several pages.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from urllib.parse import quote

import markdown
import nh3
import sympy
from markupsafe import Markup, escape

from generator.entry.content_hash import short_hash
from generator.entry.mathparse import parse_math
from generator.entry.prose import abbreviation_symbols, abbreviation_values
from generator.errors import AlmanacError
from generator.model import (
    CatalogMeta,
    EntryReport,
    MathText,
    Spacetime,
    Verdict,
)
from generator.site import mathtex
from generator.site.atlas import ChartLink

REPO_ROOT = Path(__file__).resolve().parents[2]
PACKAGE_ROOT = Path(__file__).resolve().parents[1]


def _bundled(in_repository: Path, in_package: Path) -> Path:
    """A data folder at the top of the repository (the project layout) or, in an installed
    wheel, inside the ``generator`` package (pyproject.toml maps it there as package data)."""
    return in_repository if in_repository.exists() else in_package


TEMPLATE_DIR = _bundled(REPO_ROOT / "site_templates", PACKAGE_ROOT / "site_templates")
SCHEMA_FILE = _bundled(REPO_ROOT / "schema", PACKAGE_ROOT / "schema_files") / "entry.schema.json"

SIGNATURE = "−+++"
UNITS = "G = c = 1 (geometric units)"
RIEMANN_CONVENTION = (
    r"R^{a}{}_{bcd} = \partial_{c}\Gamma^{a}{}_{db} - \partial_{d}\Gamma^{a}{}_{cb}"
    r" + \Gamma^{a}{}_{ce}\Gamma^{e}{}_{db} - \Gamma^{a}{}_{de}\Gamma^{e}{}_{cb}"
)
RICCI_CONVENTION = r"R_{bd} = R^{a}{}_{bad}"
FIELD_EQUATIONS = r"G_{ab} + \Lambda g_{ab} = 8\pi T_{ab}"
CAUTION = (
    "Every entry here has been recomputed and checked by machine, but a machine check is not "
    "peer review: before you rely on a formula, check it against the original literature cited "
    "on its page."
)

INVARIANTS = (
    ("ricci_scalar", "Ricci scalar", r"R"),
    ("kretschmann", "Kretschmann scalar", r"R_{abcd}R^{abcd}"),
    ("ricci_squared", "Ricci square", r"R_{ab}R^{ab}"),
    ("weyl_squared", "Weyl square", r"C_{abcd}C^{abcd}"),
)
MATTER_LABELS = {
    "vacuum": "vacuum",
    "lambda-vacuum": "Λ-vacuum",
    "electrovacuum": "electrovacuum",
    "perfect-fluid": "perfect fluid",
    "anisotropic-fluid": "anisotropic fluid",
    "null-dust": "null dust",
    "scalar-field": "scalar field",
    "nonlinear-electrodynamics": "nonlinear electrodynamics",
    "dilaton-maxwell": "dilaton–Maxwell",
    "unspecified": "no declared source",
    "non-vacuum": "unidentified source",
    "not-applicable": "no field equations (2D)",
    "undecided": "matter content undecided",
}
METHOD_LABELS = {
    "exact": "exact (normal form)",
    "by cases": "by cases (exact for each sign of an argument)",
    "sampled": "sampled at random points (not proved)",
    "failed": "could not be decided",
}


def decided_by(verdicts) -> str:
    """The weakest method among an entry's passing verdicts ("exact" when there are none):
    an entry that rests on a sampled verdict is marked as such on its page and in JSON."""
    order = ("exact", "by cases", "sampled")
    methods = [v.method for v in verdicts if v.ok and v.method in order]
    return max(methods, key=order.index, default="exact")
ROLE_LABELS = {
    "original": "original paper",
    "claims": "source of the stated values",
    "textbook": "textbook",
    "review": "review",
    "erratum": "erratum",
}
ALLOWED_NOTE_TAGS = {
    "p", "em", "strong", "code", "pre", "ul", "ol", "li", "blockquote", "h3", "h4", "h5",
    "table", "thead", "tbody", "tr", "th", "td", "br", "hr", "sub", "sup",
}
DOI_PATTERN = re.compile(r"^10\.\d{4,9}/[^\s\"<>]+$")
ARXIV_PATTERN = re.compile(r"^(\d{4}\.\d{4,5}|[a-z-]+(\.[A-Z]{2})?/\d{7})(v\d+)?$")


class RenderError(AlmanacError):
    """Raised by the render stage when a template or asset is missing or broken."""


# ---------------------------------------------------------------------------- shared context


def base_context(meta: CatalogMeta, root: str, title: str, section: str) -> dict[str, Any]:
    """What every page needs: relative root, title, navigation state, versions."""
    return {
        "root": root,
        "page_title": title,
        "section": section,
        "version": meta.version,
        "generator_version": meta.generator_version,
        "caution": CAUTION,
    }


def conventions_data() -> dict[str, Any]:
    return {
        "signature": SIGNATURE,
        "units": UNITS,
        "riemann": math_inline(RIEMANN_CONVENTION),
        "ricci": math_inline(RICCI_CONVENTION),
        "field_equations": math_inline(FIELD_EQUATIONS),
    }


def math_block(latex: str) -> Markup:
    return Markup(mathtex.latex_to_mathml(latex, display=True))


def math_inline(latex: str) -> Markup:
    return Markup(mathtex.latex_to_mathml(latex))


@dataclass(frozen=True)
class Surroundings:
    """What an entry's view shows of the rest of the catalog, and nothing more (it is part of
    the view's key: adding an unrelated entry must not re-render every page)."""

    published_links: tuple[str, ...] = ()  # entries its own `related` names that are published
    charts: tuple[ChartLink, ...] = ()  # other charts of its spacetime (atlas.chart_links)
    # verified limit links (from, to, limit) among published entries of its family of limits
    limits: tuple[tuple[str, str, str], ...] = ()


NOWHERE = Surroundings()  # an entry seen without the rest of the catalog


_SAFE_ID = re.compile(r"[a-z0-9]+(-[a-z0-9]+)*")
_HEX = re.compile(r"[0-9a-f]{12,64}")


def revision_file(entry_id: str, content_hash: str) -> str:
    """Site path of an entry's YAML text at the revision with this content hash.

    Both parts end up in a file name: anything but an entry id and a hex hash is refused
    (a path is never built from a value read back from a cache)."""
    if not _SAFE_ID.fullmatch(entry_id) or not _HEX.fullmatch(content_hash):
        raise ValueError(f"refusing to build a path from {entry_id!r} and {content_hash!r}")
    return f"entries/{entry_id}/revisions/{short_hash(content_hash)}.yaml"


# ---------------------------------------------------------------------------- math pieces


def coordinate_symbols(report: EntryReport) -> tuple[sympy.Symbol, ...]:
    return report.spacetime.coordinates if report.spacetime else ()


def abbreviation_pairs(report: EntryReport) -> list[tuple[sympy.Symbol, sympy.Expr]]:
    """(symbol, definition) of each abbreviation the entry declares, for typesetting."""
    if report.entry is None or report.spacetime is None:
        return []
    symbols = abbreviation_symbols(report.entry)
    return [(symbols[name], value)
            for name, value in abbreviation_values(report.entry, report.spacetime).items()
            if name in symbols]


def typeset(expr: sympy.Expr | None, coords: Sequence[sympy.Symbol] = ()) -> Markup | None:
    """MathML for an expression; if conversion fails, the plain SymPy text, escaped."""
    if expr is None:
        return None
    try:
        return Markup(mathtex.expr_to_mathml(expr, coords))
    except (mathtex.UnsafeMathML, ValueError, KeyError, IndexError) as exc:
        text = escape(sympy.sstr(expr))
        return Markup(f'<code class="math-fallback" title="{escape(str(exc))}">{text}</code>')


def parsed(math: MathText | None, spacetime: Spacetime | None) -> sympy.Expr | None:
    """An entry's math string as SymPy, through the whitelisted parser (None if it fails)."""
    if math is None or spacetime is None:
        return None
    try:
        return parse_math(math, spacetime.symbols)
    except AlmanacError:
        return None


def typeset_text(math: MathText | None, spacetime: Spacetime | None) -> dict[str, Any] | None:
    """A claimed value typeset when it parses, else shown as plain (escaped) text."""
    if math is None:
        return None
    coords = spacetime.coordinates if spacetime else ()
    expr = parsed(math, spacetime)
    return {"math": typeset(expr, coords) if expr is not None else None, "text": math.text}


def relation_latex(relation: sympy.Basic, coords: Sequence[sympy.Symbol]) -> str:
    """LaTeX for an inequality; ``a < b`` and ``b < c`` print as ``a < b < c``."""
    if isinstance(relation, sympy.And):
        parts = sorted(relation.args, key=sympy.default_sort_key)
        if len(parts) == 2:
            first, second = parts
            if first.rhs == second.lhs or second.rhs == first.lhs:
                low, high = (first, second) if first.rhs == second.lhs else (second, first)
                return (f"{mathtex.to_latex(low.lhs, coords)} {RELATION_TEX[low.rel_op]} "
                        f"{mathtex.to_latex(low.rhs, coords)} {RELATION_TEX[high.rel_op]} "
                        f"{mathtex.to_latex(high.rhs, coords)}")
        return r",\quad ".join(relation_latex(p, coords) for p in parts)
    if isinstance(relation, sympy.core.relational.Relational):
        return (f"{mathtex.to_latex(relation.lhs, coords)} {RELATION_TEX[relation.rel_op]} "
                f"{mathtex.to_latex(relation.rhs, coords)}")
    return mathtex.to_latex(relation, coords)


RELATION_TEX = {"<": "<", ">": ">", "<=": r"\le", ">=": r"\ge", "==": "=", "!=": r"\ne"}


def doi_url(doi: str | None) -> str:
    """An https link to doi.org we build ourselves; empty for anything not shaped like a DOI."""
    if not doi or not DOI_PATTERN.match(doi):
        return ""
    return "https://doi.org/" + quote(doi, safe="/.;()-_:")


def arxiv_url(arxiv: str | None) -> str:
    if not arxiv or not ARXIV_PATTERN.match(arxiv):
        return ""
    return "https://arxiv.org/abs/" + quote(arxiv, safe="/.")


_SUBSCRIPT = re.compile(r"(?<![\w&;])([A-Za-z])_([a-zξ]{1,4})\b")
_SUPERSCRIPT = re.compile(r"(?<![\w&;])([A-Za-z])\^([a-z]{1,4})\b")


def readable_text(text: str) -> Markup:
    """A checker's sentence for a page, escaped, with index notation set as real sub- and
    superscripts (``T_ab k^a k^b`` reads as T<sub>ab</sub>k<sup>a</sup>k<sup>b</sup>)."""
    html = str(escape(text))
    html = _SUBSCRIPT.sub(r"\1<sub>\2</sub>", html)
    return Markup(_SUPERSCRIPT.sub(r"\1<sup>\2</sup>", html))


STATE_LABELS = {"agrees": "agrees with source", "computed-only": "computed only",
                "disagrees": "disagrees", "undecided": "undecided"}
STATE_ABOUT = {
    "agrees": "the value printed in the cited publication equals the computed one",
    "computed-only": "computed by this tool; no published value to compare",
    "disagrees": "the stated value differs from the computed one",
    "undecided": "the tool could not decide",
}


EVIDENCE_LABELS = {
    "literature": "compared with the literature",
    "computed-only": "computed only",
}


_SUPERSCRIPT_DIGITS = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")
_GREEK_WORDS = {"alpha": "α", "beta": "β", "gamma": "γ", "theta": "θ", "phi": "φ", "psi": "ψ",
                "chi": "χ", "rho": "ρ", "sigma": "σ", "tau": "τ", "omega": "ω", "mu": "μ",
                "nu": "ν", "pi": "π", "lambda": "λ", "kappa": "κ", "xi": "ξ", "ell": "ℓ",
                "Lambda": "Λ", "Delta": "Δ", "Sigma": "Σ", "Omega": "Ω", "Xi": "Ξ", "Phi": "Φ",
                "Psi": "Ψ"}
_GREEK_WORD = re.compile(r"(?<![A-Za-z])(" + "|".join(_GREEK_WORDS) + r")(?![A-Za-z])")
_INTEGER_POWER = re.compile(r"\^\((-?\d+)\)|\^(\d+)(?![\d.])")
_MINUS = re.compile(r"(?<=[\s(=,\[])-(?=[\w(√])| - ")


def reader_text(text: str) -> str:
    """Program syntax a reader should not see in prose the tool writes (reasons, alt text,
    polynomials in notes): integer powers as superscripts (r², r⁻¹), other powers as ^,
    square roots as √, products as a centred dot, minus signs as −, Greek names as letters."""
    text = text.replace("**", "^").replace("sqrt(", "√(")
    text = re.sub(r"(?<=\S)\*(?=\S)", "·", text)
    text = _INTEGER_POWER.sub(
        lambda m: (m.group(1) or m.group(2)).translate(_SUPERSCRIPT_DIGITS), text)
    text = _GREEK_WORD.sub(lambda m: _GREEK_WORDS[m.group(1)], text)
    return _MINUS.sub(lambda m: " − " if m.group(0) == " - " else "−", text)


def verdict_state(verdict: Verdict) -> str:
    """The three statuses of the report, with "disagrees" split for the reader into a proved
    difference and a question the tool could not settle."""
    if not verdict.ok and verdict.method == "failed":
        return "undecided"
    return verdict.status


def verdict_row(verdict: Verdict) -> dict[str, Any]:
    return {
        "subject": verdict.subject,
        "ok": verdict.ok,
        "status": verdict.status,
        "state": verdict_state(verdict),
        "state_label": STATE_LABELS[verdict_state(verdict)],
        "state_about": STATE_ABOUT[verdict_state(verdict)],
        "method": verdict.method,
        "method_label": METHOD_LABELS.get(verdict.method, verdict.method),
        "detail": reader_text(verdict.detail),
        "detail_html": readable_text(reader_text(verdict.detail)),
        "claimed": verdict.claimed,
        "computed": verdict.computed,
    }


def markdown_html(text: str, allow_links: bool) -> Markup:
    """Markdown rendered then sanitised by nh3; links only when the text is our own."""
    html = markdown.markdown(text, extensions=["tables", "fenced_code"], output_format="html")
    tags = ALLOWED_NOTE_TAGS | ({"a", "h1", "h2"} if allow_links else set())
    attributes = {"a": {"href", "title"}} if allow_links else {}
    clean = nh3.clean(
        html, tags=tags, attributes=attributes, url_schemes={"https"},
        link_rel="noopener noreferrer",
    )
    return Markup(clean)


# ---------------------------------------------------------------------------- downloads


def expr_text(expr: sympy.Basic | None) -> str | None:
    """A SymPy expression as a string ``parse_expr`` reads back (entry's own names)."""
    return None if expr is None else sympy.sstr(expr, order="lex")

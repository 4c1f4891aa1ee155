"""The report as one self-contained HTML page: styles and charts inline, nothing fetched."""

from __future__ import annotations

from functools import cache
from importlib.resources import files

import jinja2
from markupsafe import Markup

from qc.report.content import Content

__all__ = ["css_string", "render_html"]


def css_string(text: str) -> Markup:
    """A CSS string literal for ``content:``, with quotes, backslashes and breaks escaped.

    Marked safe for the template: inside ``<style>`` HTML escapes would be read literally,
    and ``<`` is escaped the CSS way so the text cannot close the style element."""
    escaped = (
        str(text).replace("\\", "\\\\").replace('"', '\\"').replace("\n", "\\A ")
        .replace("<", "\\3C ")  # keeps "</style>" out of the style element
    )
    return Markup(f'"{escaped}"')


@cache
def _environment() -> jinja2.Environment:
    env = jinja2.Environment(
        loader=jinja2.PackageLoader("qc.report", "templates"),
        autoescape=jinja2.select_autoescape(["html", "j2"]),
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters["css_string"] = css_string
    return env


@cache
def _stylesheet() -> str:
    return files("qc.report").joinpath("static/report.css").read_text(encoding="utf-8")


def render_html(content: Content) -> str:
    """The whole report page for ``content``."""
    m = content.meta
    title = m.title + (f" · {m.batch}" if m.batch else "")
    if content.warnings:
        head = (f"WARNING: sizes at {m.reference_temperature_c:g} °C, "
                "not at the ISO 1 reference of 20 °C")
    else:
        head = f"Sizes at {content.ref} · lengths in {content.unit.long_name}"
    template = _environment().get_template("report.html.j2")
    return template.render(c=content, css=Markup(_stylesheet()), page_head=head, page_title=title)

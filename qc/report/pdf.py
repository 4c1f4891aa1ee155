"""The PDF: the same HTML laid out by WeasyPrint, with every outside fetch refused."""

from __future__ import annotations

from typing import Any

from qc.errors import ConfigError

__all__ = ["html_to_pdf"]


def _fetcher(weasyprint: Any) -> Any:
    """A URL fetcher that reads the page's own ``data:`` URIs and nothing else."""
    urls = weasyprint.urls
    if hasattr(urls, "URLFetcher"):  # WeasyPrint 66 and later
        return urls.URLFetcher(allowed_protocols=("data",))

    def data_only(url: str, *args: Any, **kwargs: Any) -> Any:  # older WeasyPrint
        if not url.startswith("data:"):
            raise ValueError(f"the report fetches nothing from outside the page: {url}")
        return urls.default_url_fetcher(url, *args, **kwargs)

    return data_only


def html_to_pdf(html: str) -> bytes:
    """PDF bytes of the report page."""
    try:
        import weasyprint
        import weasyprint.urls
    except (ImportError, OSError) as exc:  # OSError: the pango library under it is missing
        raise ConfigError(
            "PDF output needs the weasyprint package and the pango library: "
            "install them, or ask for the HTML report only"
        ) from exc
    doc = weasyprint.HTML(string=html, url_fetcher=_fetcher(weasyprint), base_url=None)
    return doc.write_pdf()

"""Lay out the calibration record (:mod:`curvewright.io.report`) as a PDF with Qt's PDF writer.

The content is turned into rich text (HTML subset that QTextDocument understands) with the figures
as embedded images, then printed page by page to a QPdfWriter on A4. Works offscreen.
"""

from __future__ import annotations

import html
from pathlib import Path

from ..io.atomic import write_atomically
from ..io.audit import file_sha256
from ..io.report import FigureSlot, PageBreak, Paragraph, ReportContent, SignatureLines
from ..io.result_tables import Table
from . import figures
from .qt_runtime import ensure_application

STYLES = {
    "title": "font-size:15pt; font-weight:bold; margin-bottom:4px;",
    "heading": "font-size:12.5pt; font-weight:bold; margin-top:10px; color:#1d4f91;",
    "subheading": "font-size:10.5pt; font-weight:bold; margin-top:6px;",
    "body": "font-size:8.5pt;",
    "small": "font-size:7.5pt; color:#333333;",
    "caution": "font-size:8.5pt; font-weight:bold; color:#7a2400; border:1px solid #7a2400; padding:3px;",
}
FULL_PRECISION_TABLES = ("Calibration",)


def report_html(content: ReportContent) -> tuple[str, dict[str, object]]:
    """Rich text for the report and the images it refers to (name → QImage)."""
    images: dict[str, object] = {}
    parts = ["<html><body style='font-family:sans-serif;'>"]
    draw = {"curve": figures.draw_curve, "residuals": figures.draw_relative_errors, "influence": figures.draw_influence}
    level = content.result.run.settings.confidence_level
    for block in content.blocks:
        if isinstance(block, Paragraph):
            parts.append(f"<p style='{STYLES[block.style]}'>{html.escape(block.text)}</p>")
        elif isinstance(block, PageBreak):
            parts.append("<div style='page-break-before: always'></div>")
        elif isinstance(block, FigureSlot):
            analyte = content.result.analyte(block.analyte)
            name = f"figure-{len(images)}.png"
            options: dict[str, object] = {"font_size": 17}
            if block.kind == "curve":
                options["level"] = level
            if block.kind in ("curve", "residuals"):
                options["log_x"] = figures.wide_range(analyte)
            size = (1500, 820) if block.kind == "curve" else (1500, 600)
            images[name] = figures.render(draw[block.kind], analyte, *size, **options)
            parts.append(f"<p><img src='{name}' width='640'></p><p style='{STYLES['small']}'>{html.escape(block.caption)}</p>")
        elif isinstance(block, Table):
            parts.append(_table(block))
        elif isinstance(block, SignatureLines):
            parts.append("<table cellspacing='0' cellpadding='10' style='margin-top:18px; font-size:9pt;'>")
            for role in block.roles:
                parts.append(f"<tr><td>{role}:</td><td>______________________________</td>"
                             "<td>Date:</td><td>________________</td></tr>")
            parts.append("</table>")
    parts.append("</body></html>")
    return "".join(parts), images


def _format(value: object, full: bool) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return repr(value) if full else f"{value:.6g}"
    return html.escape(str(value))


def _table(table: Table) -> str:
    full = table.title.startswith(FULL_PRECISION_TABLES)
    out = [f"<p style='{STYLES['subheading']}'>{html.escape(table.title)}</p>",
           "<table border='1' cellspacing='0' cellpadding='2' style='border-color:#999999; font-size:6.5pt;'>",
           "<tr style='background-color:#e8edf5;'>"]
    out += [f"<th>{html.escape(c.heading)}</th>" for c in table.columns]
    out.append("</tr>")
    for row in table.rows:
        out.append("<tr>" + "".join(f"<td>{_format(v, full)}</td>" for v in row) + "</tr>")
    out.append("</table>")
    return "".join(out)


def pdf_bytes(content: ReportContent) -> bytes:
    ensure_application()
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QMarginsF, QUrl
    from PySide6.QtGui import QPageLayout, QPageSize, QPdfWriter, QTextDocument

    text, images = report_html(content)
    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    writer = QPdfWriter(buffer)
    writer.setTitle(content.title)
    writer.setCreator("Curvewright")
    writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4), QPageLayout.Orientation.Portrait,
                                     QMarginsF(14, 14, 14, 16), QPageLayout.Unit.Millimeter))
    writer.setResolution(300)
    document = QTextDocument()
    for name, image in images.items():
        document.addResource(QTextDocument.ResourceType.ImageResource, QUrl(name), image)
    document.setHtml(text)
    document.print_(writer)
    del writer
    buffer.close()
    return bytes(data.data())


def write_report(content: ReportContent, path: str | Path) -> str:
    """Write the PDF atomically; return the SHA-256 of the file."""
    data = pdf_bytes(content)
    write_atomically(Path(path), data)
    return file_sha256(data)

"""Run documents, import (paste, CSV, XLSX), export (XLSX, CSV) and the content of the printable
record. Never imports Qt: the record is laid out as PDF by :mod:`curvewright.app.report_pdf`.
"""

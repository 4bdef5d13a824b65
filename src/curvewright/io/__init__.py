"""Run documents, import (paste, CSV, XLSX), export (XLSX, CSV) and the printable report.

Never imports Qt except in the report renderer, which is loaded on demand.
"""

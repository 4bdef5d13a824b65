"""The numbers: fitting, diagnostics, comparison, inverse prediction, limits, acceptance.

numpy and scipy only; this package never imports Qt.
"""

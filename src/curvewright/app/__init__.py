"""The Qt front end (PySide6 + pyqtgraph): views that read the engine's results and never compute
statistics themselves, and the PDF renderer of the calibration record."""

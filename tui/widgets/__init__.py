"""The tuner's widgets: the setup form, the load chart adapter, the status words and the title line.

Each widget shows what its parent hands it (attributes down) and reports edits with messages (up).
"""

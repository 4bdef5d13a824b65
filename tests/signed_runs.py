"""A signed run document changed by hand, for the tests of a record that is not intact."""

from __future__ import annotations

import json
import re
from pathlib import Path


def cut_out_reviewer_signature(path: Path, signer: str) -> str:
    """Cut the reviewer's signature (by ``signer``, the only one in the "signatures" list) out of the run
    document at ``path`` as a person does in a text editor, leaving its audit entry; the words the record
    check names the removed signature with."""
    text = path.read_text(encoding="utf-8")
    cut, n = re.subn(r'"signatures": \[\n\s*\{\n\s*"role": "reviewer",.*?\n\s*\}\n\s*\]', '"signatures": []', text,
                     count=1, flags=re.S)
    assert n == 1
    path.write_text(cut, encoding="utf-8")
    entries = json.loads(text)["audit"]
    number = next(i for i, e in enumerate(entries, start=1) if e["action"] == "signed")
    return f"audit entry {number} records a signature (reviewer {signer}, {entries[number - 1]['time_utc']})"

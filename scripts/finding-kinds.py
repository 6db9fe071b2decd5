#!/usr/bin/env python3
"""Regenerate what follows from the list of finding kinds.

`core/src/design/findings.rs` declares `enum FindingKind` with a doc line
per variant. This script rewrites, from that declaration, `FindingKind::ALL`
and `FindingKind::index` in the same file and the table of kinds in
`docs/solve-json.md` (the test `every_kind_is_listed_once_and_documented`
fails until they agree). Run from the repository root after adding a kind:

    python3 scripts/finding-kinds.py && cargo fmt --all
"""

import pathlib
import re

ROOT = pathlib.Path(__file__).resolve().parents[1]
SRC = ROOT / "core" / "src" / "design" / "findings.rs"
DOC = ROOT / "docs" / "solve-json.md"


def snake(name):
    return re.sub(r"(?<!^)(?=[A-Z])", "_", name).lower()


def main():
    s = SRC.read_text()
    start = s.index("pub enum FindingKind {")
    end = s.index("\n}", start)
    items = re.findall(r"((?:    /// .*\n)+)    (\w+),", s[start:end])
    names = [v for _, v in items]
    all_list = ",\n        ".join("Self::" + v for v in names)
    idx = "\n".join(f"            Self::{v} => {i}," for i, v in enumerate(names))
    i = s.index("    /// Every kind, in declaration order.")
    j = s.index("    /// The stable name written to the JSON.")
    block = (
        "    /// Every kind, in declaration order.\n"
        f"    pub const ALL: [Self; {len(names)}] = [\n        {all_list},\n    ];\n\n"
        "    /// Position in [`Self::ALL`] (an exhaustive match: a new kind does not\n"
        "    /// compile until it is placed, and the test of `ALL` fails until it is\n"
        "    /// listed there).\n"
        "    #[must_use]\n"
        "    pub const fn index(self) -> usize {\n"
        f"        match self {{\n{idx}\n        }}\n    }}\n\n"
    )
    SRC.write_text(s[:i] + block + s[j:])
    rows = "\n".join(
        f"| `{snake(v)}` | {' '.join(l.strip()[4:] for l in d.strip().splitlines()).rstrip('.')} |"
        for d, v in items
    )
    d = DOC.read_text()
    head = "| `kind` | about |\n|---|---|\n"
    a = d.index(head) + len(head)
    b = d.find("\n\n", a)
    b = len(d) if b < 0 else b
    DOC.write_text(d[:a] + rows + d[b:])
    print(f"{len(names)} finding kinds")


if __name__ == "__main__":
    main()

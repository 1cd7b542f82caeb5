#!/usr/bin/env python3
"""Message catalogues of the pages and the field app (Fluent, templates/i18n/<lang>/*.ftl).

    python3 templates/i18n/catalogue.py check
        Every language has every message of English (file by file), no others, and the
        same variables ({ $name }) in each. Exit status 1 with a list when not.

    python3 templates/i18n/catalogue.py from-json DIR [FILE]
        Port flat JSON catalogues DIR/<lang>.json (the field app's old format: keys like
        "pair.refused.used", placeholders "{name}") into templates/i18n/<lang>/FILE
        (default field.ftl). A key becomes a Fluent id by turning "." into "-"
        ("pair-refused-used"); "{name}" becomes "{ $name }". Messages already in the .ftl
        file are kept as they are; new ones are appended. Run `check` after.

Only the standard library; no Fluent parser is needed for the simple one-line messages
this project writes (`id = text`, with `.attr` lines and multi-line values skipped over).
"""
import json
import re
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
LANGS = ["en", "es", "fr", "id", "pt"]
ID = re.compile(r"^([a-zA-Z][a-zA-Z0-9_-]*)\s*=\s?(.*)$")


def fluent_id(key):
    return key.replace(".", "-")


def to_fluent(text):
    if "\n" in text:
        raise ValueError(f"multi-line message not supported here: {text!r}")
    out = re.sub(r"\{(\w+)\}", lambda m: "{ $" + m.group(1) + " }", text)
    if out != out.strip() or out[:1] in "[*.":
        out = '{ "' + out.replace('"', '\\"') + '" }'  # keep leading/trailing characters literal
    return out


def messages(path):
    """id -> full text of the message (value and any continuation lines)."""
    found, current = {}, None
    for line in path.read_text(encoding="utf-8").splitlines():
        m = ID.match(line)
        if m:
            current = m.group(1)
            found[current] = m.group(2)
        elif line.startswith((" ", "\t")) and current:
            found[current] += "\n" + line
        elif not line.strip() or line.startswith("#"):
            current = None if not line.strip() else current
    return found


def variables(text):
    return set(re.findall(r"\$([a-zA-Z][a-zA-Z0-9_-]*)", text))


def check():
    problems = []
    for en_file in sorted((HERE / "en").glob("*.ftl")):
        en = messages(en_file)
        for lang in LANGS[1:]:
            other_file = HERE / lang / en_file.name
            if not other_file.exists():
                problems.append(f"{lang}/{en_file.name}: missing file")
                continue
            other = messages(other_file)
            for k in en.keys() - other.keys():
                problems.append(f"{lang}/{en_file.name}: missing {k}")
            for k in other.keys() - en.keys():
                problems.append(f"{lang}/{en_file.name}: {k} is not in English")
            for k in en.keys() & other.keys():
                if variables(en[k]) != variables(other[k]):
                    problems.append(f"{lang}/{en_file.name}: {k} has variables "
                                    f"{sorted(variables(other[k]))}, English {sorted(variables(en[k]))}")
    for p in problems:
        print(p)
    print("catalogues agree" if not problems else f"{len(problems)} problem(s)")
    return 1 if problems else 0


def from_json(src, file_name):
    for lang in LANGS:
        src_file = Path(src) / f"{lang}.json"
        if not src_file.exists():
            continue
        data = json.loads(src_file.read_text(encoding="utf-8"))
        target = HERE / lang / file_name
        target.parent.mkdir(parents=True, exist_ok=True)
        have = messages(target) if target.exists() else {}
        new = [f"{fluent_id(k)} = {to_fluent(v)}" for k, v in data.items() if fluent_id(k) not in have]
        if new:
            text = target.read_text(encoding="utf-8") if target.exists() else ""
            if text and not text.endswith("\n"):
                text += "\n"
            target.write_text(text + "\n".join(new) + "\n", encoding="utf-8")
        print(f"{lang}: {len(new)} message(s) added to {target.relative_to(HERE)}")
    return 0


if __name__ == "__main__":
    if sys.argv[1:2] == ["check"]:
        sys.exit(check())
    if sys.argv[1:2] == ["from-json"] and len(sys.argv) in (3, 4):
        sys.exit(from_json(sys.argv[2], sys.argv[3] if len(sys.argv) == 4 else "field.ftl"))
    print(__doc__)
    sys.exit(2)

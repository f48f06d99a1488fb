"""Parses Nivalis' BibTeX output with bibtexparser, a general-purpose parser.

For several configurations (the demo disks, plus variants that switch methods
off) it runs `nivalis methods DISK --bibtex FILE` and checks that: the file
parses with no failed blocks; every article has author, title, journal and year;
DOIs look like DOIs; the entry keys are exactly the references the methods
paragraph cites (each cited author-year appears in the paragraph, and nothing
else is in the file); and switching a method off removes its reference.
It also checks the accents (issue 11 item 5): the file is ASCII, and
bibtexparser's LaTeX decoding turns {\"O}berg into the Öberg the paragraph
prints; and the software's own @misc entry carries the workspace version and
is cited in every paragraph.

Run from the repository root: python3 tests/python/check_bibtex.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import json
import pathlib
import re
import subprocess
import sys
import tempfile

try:
    import bibtexparser
except ImportError:
    print("bibtexparser is missing: python3 -m pip install bibtexparser")
    sys.exit(1)

ROOT = pathlib.Path(__file__).resolve().parents[2]
VERSION = re.search(r'^version = "([^"]+)"', (ROOT / "Cargo.toml").read_text(), re.M).group(1)
passed = 0
failed = 0


def check(condition, what):
    global passed, failed
    if condition:
        passed += 1
    else:
        failed += 1
        print(f"FAIL: {what}")


def run_methods(disk_path, tmp):
    bib = pathlib.Path(tmp) / "refs.bib"
    paragraph = subprocess.run(
        ["cargo", "run", "--quiet", "-p", "nivalis-cli", "--", "methods", str(disk_path), "--bibtex", str(bib)],
        cwd=ROOT, check=True, capture_output=True, text=True,
    ).stdout
    return paragraph, bib.read_text()


def entries_of(text, label):
    check(text.isascii(), f"{label}: the BibTeX is not ASCII (accents must be LaTeX commands)")
    library = bibtexparser.parse_string(
        text, append_middleware=[bibtexparser.middlewares.LatexDecodingMiddleware()])
    check(len(library.failed_blocks) == 0, f"{label}: {len(library.failed_blocks)} BibTeX blocks failed to parse")
    return {e.key: e for e in library.entries}


with tempfile.TemporaryDirectory() as tmp:
    configs = {p.name: json.loads(p.read_text()) for p in sorted((ROOT / "demo_disks").glob("*.json"))}
    configs["passive_no_cr_desorption"] = {"disk": {"accretion_rate_msun_per_yr": 0}, "ices": {"cosmic_ray_desorption": False}}
    cited_sets = {}
    for label, disk in configs.items():
        path = pathlib.Path(tmp) / "disk.json"
        path.write_text(json.dumps(disk))
        paragraph, bib = run_methods(path, tmp)
        entries = entries_of(bib, label)
        check(len(entries) >= 5, f"{label}: at least five references, got {len(entries)}")
        for key, e in entries.items():
            fields = {f.key for f in e.fields}
            required = {"author", "title", "journal", "year"} if e.entry_type == "article" else {"author", "title", "year", "version"}
            check(required <= fields, f"{label}: {key} lacks a required field ({fields})")
            if "doi" in fields:
                check(re.fullmatch(r"10\.\d{4,9}/\S+", e["doi"]) is not None, f"{label}: {key} DOI {e['doi']!r} malformed")
            year = e["year"]
            first_author = e["author"].split(",")[0].strip().strip("{}")
            # The paragraph cites "Author ... Year" for every entry in the file.
            check(re.search(re.escape(first_author) + r"[^;()]*" + year, paragraph) is not None,
                  f"{label}: {key} ({first_author} {year}) is in the BibTeX but not cited in the paragraph")
        # Nothing cited that is not in the file: every citation "First, Second & Third Year"
        # inside a parenthesised group maps to an entry with that first author and year.
        known = {(e["author"].split(",")[0].strip().strip("{}"), e["year"]) for e in entries.values()}
        for group in re.findall(r"\(([^()]*\d{4})\)", paragraph):
            for citation in group.split("; "):
                year = citation.strip()[-4:]
                first = re.split(r",| et al\.| &| \d{4}", citation.strip())[0].strip()
                check((first, year) in known, f"{label}: paragraph cites {citation!r} which the BibTeX lacks")
        check("independent pure ices" in paragraph and "1+1D" in paragraph and "equilibrium" in paragraph,
              f"{label}: paragraph states the simplifications")
        check("nivalis" in entries and entries["nivalis"]["version"] == VERSION,
              f"{label}: no software entry with version {VERSION}")
        check(f"Nivalis version {VERSION} (The Nivalis developers" in paragraph, f"{label}: the paragraph does not cite the software")
        check("Oberg" not in paragraph, f"{label}: ASCII 'Oberg' in the paragraph")
        if "oberg2011" in entries:
            check(entries["oberg2011"]["author"].startswith("Öberg, K. I."),
                  f"{label}: oberg2011 author decodes to {entries['oberg2011']['author']!r}, not Öberg")
        cited_sets[label] = set(entries)
    base = cited_sets["young_sun.json"]
    passive = cited_sets["passive_no_cr_desorption"]
    check("shakura1973" in base and "shakura1973" not in passive, "a passive disk does not cite the viscous-disk papers")
    check("hasegawa1993" in base and "hasegawa1993" not in passive, "without cosmic-ray desorption Hasegawa & Herbst 1993 is not cited")
    check("bell1994" in cited_sets["luminous_herbig.json"] and "bell1994" not in base, "Bell & Lin 1994 cited only when its opacities are used")
    check("oberg2011" in cited_sets["step_model_comparison.json"], "the step model cites its condensation temperatures")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)

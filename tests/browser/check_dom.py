"""Checks a report's DOM as headless Chromium left it (--dump-dom), against the findings
JSON of the same run and the browser's log.

usage: check_dom.py MODE DUMP.html LOG [FINDINGS.json]

MODE is one of
  selftest  the page was opened at #selftest: its script ran, filtered, stepped with j/k
            and recorded a decision; compare what it found with the findings JSON
  blocked   a copy of the report whose policy allows no script at all, so that its own
            script is refused as in a browser with scripts off (Chromium's --dump-dom
            needs scripting on): every answer must be shown and the tools stay hidden
  control   a copy of a report with an injected inline script: the policy must have
            blocked it, and the log must show the violation (so that the log check of
            the other modes can see one)

Prints what it checked; exits 1 on the first list of failures. Standard library only.
"""

import html.parser
import json
import sys

CSP_VIOLATION = "violates the following Content Security Policy"


class Dom(html.parser.HTMLParser):
    """The few facts of the dumped DOM the checks need."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.body = {}
        self.title = ""
        self._in_title = False
        self.scripts = 0
        self.articles = []  # (id, hidden)
        self.findings = []  # ids in document order
        self.tools_hidden = None
        self.event_attrs = []
        self.images = 0
        self.styles = 0
        self.foreign = []  # elements that load or embed something
        self.outward = []  # links and sources that leave the page
        self.style_attrs = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        for name, value in attrs:
            if name.startswith("on"):
                self.event_attrs.append((tag, name))
            if name in ("style", "srcdoc"):
                self.style_attrs.append((tag, name))
            # The page's own decisions download (a#download) is a blob: URL its script
            # made; anything else must stay inside the page.
            own_download = tag == "a" and a.get("id") == "download" and (value or "").startswith("blob:")
            if name in ("href", "src", "action", "formaction", "xlink:href") \
                    and not (value or "").startswith("#") and not own_download:
                self.outward.append((tag, name, value))
        if tag in ("iframe", "object", "embed", "link", "base", "frame", "portal"):
            self.foreign.append(tag)
        if tag == "style":
            self.styles += 1
        if tag == "body":
            self.body = a
        elif tag == "title":
            self._in_title = True
        elif tag == "script":
            self.scripts += 1
        elif tag == "img":
            self.images += 1
        elif tag == "article" and "ans" in a.get("class", "").split():
            self.articles.append((a.get("id"), "hidden" in a))
        elif tag == "li" and "finding" in a.get("class", "").split():
            self.findings.append(a.get("id"))
        if a.get("id") == "tools":
            self.tools_hidden = "hidden" in a

    def handle_endtag(self, tag):
        if tag == "title":
            self._in_title = False

    def handle_data(self, data):
        if self._in_title:
            self.title += data


def answers_with(findings, pred):
    return sum(1 for a in findings["answers"] if pred(a))


def main():
    mode, dump_path, log_path = sys.argv[1:4]
    findings = None
    if len(sys.argv) > 4:
        with open(sys.argv[4], encoding="utf-8") as f:
            findings = json.load(f)
    with open(dump_path, encoding="utf-8") as f:
        dom = Dom()
        dom.feed(f.read())
    with open(log_path, encoding="utf-8", errors="replace") as f:
        log = f.read()
    failures = []

    def check(ok, what):
        print(("  ok   " if ok else "  FAIL ") + what)
        if not ok:
            failures.append(what)

    if mode == "control":
        check("data-injected" not in dom.body, "the injected inline script did not run")
        check(CSP_VIOLATION in log, "the browser log shows the policy violation")
        return finish(failures)

    check(dom.articles != [], "the page has answers")
    check("data-injected" not in dom.body, "no injected script or handler set body[data-injected]")
    check("INJECTED" not in dom.title, "no injected script changed the title")
    check(dom.scripts == 1, f"exactly one script element (found {dom.scripts})")
    check(dom.event_attrs == [], f"no event-handler attributes ({dom.event_attrs[:3]})")
    check(dom.images == 0, f"no img elements (found {dom.images})")
    check(dom.styles == 1, f"exactly one style element (found {dom.styles})")
    check(dom.foreign == [], f"no iframe, object, embed, link or base elements ({dom.foreign[:3]})")
    check(dom.outward == [], f"no link or source leaving the page ({dom.outward[:3]})")
    check(dom.style_attrs == [], f"no style or srcdoc attributes ({dom.style_attrs[:3]})")
    check("Uncaught" not in log, "no uncaught script error in the log")
    if mode == "blocked":
        check(CSP_VIOLATION in log, "the browser refused the page's script, as the copy's policy says")
        check(dom.tools_hidden is True, "the script's tools stay hidden without the script")
        check(dom.articles != [] and all(not h for _, h in dom.articles),
              "every answer is shown without the script")
        check("data-selftest" not in dom.body, "the page's script did not run")
        return finish(failures)
    check(CSP_VIOLATION not in log and "Refused to" not in log, "no policy violation in the log")

    raw = dom.body.get("data-selftest")
    check(raw is not None, "the self-test ran and wrote body[data-selftest]")
    if raw is None:
        return finish(failures)
    r = json.loads(raw)
    check("error" not in r, f"the self-test raised no error ({r.get('error', '')[:200]})")
    if "error" in r:
        return finish(failures)
    check(r["answers"] == len(dom.articles), "the script saw every answer")
    check(r["all"] == r["answers"] and r["all_again"] == r["answers"],
          "with no filter every answer is shown, also after filtering")
    check(r["search_nothing"] == 0, "a text that occurs nowhere shows no answer")
    check(r.get("user", {}).get("consistent", True), "the user filter shows that user's answers only")
    for kind in ("verdict", "flag", "status"):
        check(all(v != "inconsistent" for v in r[kind].values()),
              f"the {kind} filter shows exactly the answers that carry the value")
    first = dom.findings[0] if dom.findings else None
    check(r["first_finding"] == first, "the first finding is the first in the document")
    if first:
        check(r["j1"] == first, "j moves to the first finding")
        check(r["k1"] == r["j1"], "k moves back")
        if len(dom.findings) > 1:
            check(r["j2"] == dom.findings[1], "a second j moves to the second finding")
        check(r.get("refused_without_reviewer") is True, "a decision without a reviewer id is refused")
        check(r.get("download_ready") is True, "the decisions file is offered for download")
        lines = [json.loads(x) for x in r.get("decisions_file", "").splitlines() if x]
        check(len(lines) == 1, "one decision recorded")
        if lines:
            d = lines[0]
            check(set(d) <= {"answer", "sentence", "ref", "finding", "by", "note"}
                  and {"answer", "finding", "by", "note"} <= set(d),
                  f"the decision has the --accept fields ({sorted(d)})")
            check(d["by"] == "selftest-reviewer", "the decision names the reviewer")

    if findings is not None:
        ans = findings["answers"]
        for v, n in r["verdict"].items():
            want = answers_with(findings, lambda a: any(s["verdict"] == v for s in a["sentences"]))
            check(n == want, f"verdict filter {v}: {n} answers shown, findings JSON says {want}")
        for fl, n in r["flag"].items():
            want = answers_with(findings, lambda a: any(fl in s["flags"] for s in a["sentences"]))
            check(n == want, f"flag filter {fl}: {n} answers shown, findings JSON says {want}")
        for st, n in r["status"].items():
            want = answers_with(findings, lambda a: any(c["status"] == st for c in a["citations"]))
            check(n == want, f"status filter {st}: {n} answers shown, findings JSON says {want}")
        check(r["failing"] == findings["summary"]["answers_failed"],
              f"'failing only' shows {r['failing']} answers, findings JSON says "
              f"{findings['summary']['answers_failed']}")
        check(r["answers"] == len(ans), "the page has every answer of the findings JSON")
        want = answers_with(findings, lambda a: "<script>" in a["answer"].lower())
        if want:
            check(r["search_script"] >= want,
                  f"the text filter finds '<script>' as text in {r['search_script']} answers "
                  f"(at least {want})")
    return finish(failures)


def finish(failures):
    if failures:
        print(f"{len(failures)} check(s) failed")
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""A plugin can add a report section (register_report_sections); its text is escaped."""

import textwrap


def test_plugin_section_appears_escaped_and_a_failing_one_is_noted(tmp_path, seeded_store, run_main):
    plugin = tmp_path / "labsection.py"
    plugin.write_text(textwrap.dedent("""\
        from saltbench.models import hookimpl

        class Ours:
            title = "Laboratory acceptance rule"
            def render(self, comparison):
                n = sum(len(v) for v in comparison.outcomes.values())
                return f"Accepted when the recommended model holds. {n} rows compared. <b>not bold</b>"

        class Broken:
            title = "Broken section"
            def render(self, comparison):
                raise RuntimeError("boom")

        @hookimpl
        def register_report_sections(context):
            return [Ours(), Broken()]
        """))
    out_dir = tmp_path / "rep"
    code, out, err = run_main("--plugin", str(plugin), "report", "NaCl", "--models", "davies", "--jobs", "1",
                              "--out", str(out_dir), store=seeded_store)
    assert code == 0, err
    html = (out_dir / "report.html").read_text(encoding="utf-8")
    assert "Laboratory acceptance rule" in html and "1 rows compared." in html
    assert "&lt;b&gt;not bold&lt;/b&gt;" in html and "<b>not bold</b>" not in html
    assert "could not be produced: RuntimeError: boom" in html
    md = (out_dir / "report.md").read_text(encoding="utf-8")
    assert "Laboratory acceptance rule" in md
    # the built-in cautions still follow the plugin sections
    assert html.index("Laboratory acceptance rule") < html.index("Limits and cautions")

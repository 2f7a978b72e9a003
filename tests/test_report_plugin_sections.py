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


def test_a_section_with_render_mixture_appears_in_mixture_reports(tmp_path, seeded_store, run_main):
    import shutil
    from pathlib import Path

    examples = Path(__file__).resolve().parents[1] / "refdata" / "examples" / "mixtures"
    shutil.copytree(examples, tmp_path / "mixtures")
    code, out, err = run_main("data", "add", str(tmp_path / "mixtures"), store=seeded_store)
    assert code == 0, err
    plugin = tmp_path / "mixsection.py"
    plugin.write_text(textwrap.dedent("""\
        from saltbench.models import hookimpl

        class Both:
            title = "Brine acceptance rule"
            def render(self, comparison):
                return "one-salt text"
            def render_mixture(self, comparison):
                return f"{comparison.system}: {len(comparison.outcomes)} models judged"

        class SaltsOnly:
            title = "Salts-only section"
            def render(self, comparison):
                return sum(len(v) for v in comparison.outcomes.values())  # would fail on a mixture

        @hookimpl
        def register_report_sections(context):
            return [Both(), SaltsOnly()]
        """))
    out_dir = tmp_path / "rep"
    code, out, err = run_main("--plugin", str(plugin), "report", "--mixture", "HCl + NaCl", "--models",
                              "pitzer,sit", "--out", str(out_dir), store=seeded_store)
    assert code == 0, err
    md = (out_dir / "report.md").read_text(encoding="utf-8")
    assert "Brine acceptance rule" in md and "HCl + NaCl: 2 models judged" in md
    assert "Salts-only section" not in md and "could not be produced" not in md
    assert md.index("Brine acceptance rule") < md.index("Limits and cautions")

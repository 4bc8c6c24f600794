from memory_infer.reports.html import number, page, table


def test_numbers_tables_and_pages():
    assert number(0.634, 0.0123) == "0.63 ± 0.01"
    assert number(None) == "—" and number(float("inf")) == "inf"
    assert "<td>a &amp; b</td>" in table(["x"], [("a & b",)])
    text = page("T", [("Section", "<p>x</p>")], "caution text")
    assert text.startswith("<!doctype html>") and "caution text" in text and "<h2>Section</h2>" in text

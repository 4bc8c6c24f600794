from memory_infer.reports.html import number, page, table


def test_numbers_tables_and_pages():
    # rounding (common practice, no source): the error to two significant digits, the value to the same place
    assert number(0.634, 0.0123) == "0.634 ± 0.012"
    assert number(0.6321, 0.0043) == "0.6321 ± 0.0043"  # was "0.63 ± 0.00": the error must stay visible
    assert number(12.3456, 1.5) == "12.3 ± 1.5" and number(1234.5, 150.0) == "1234 ± 150"
    assert number(0.5, 0.0) == "0.50 ± 0" and number(0.5) == "0.50"
    assert number(None) == "—" and number(float("inf")) == "inf"
    assert "<td>a &amp; b</td>" in table(["x"], [("a & b",)])
    text = page("T", [("Section", "<p>x</p>")], "caution text")
    assert text.startswith("<!doctype html>") and "caution text" in text and "<h2>Section</h2>" in text


def test_an_undefined_error_is_a_dash_with_its_reason_never_zero():
    from memory_infer.reports.html import number_or_undefined

    text = number_or_undefined(0.25, None, True)
    assert text.startswith("0.25 ± —") and "fewer than two effective samples" in text
    assert number_or_undefined(0.25, None, False) == "0.25"  # the two-point approximation has no error at all
    assert number_or_undefined(0.25, 0.013, True) == "0.250 ± 0.013"

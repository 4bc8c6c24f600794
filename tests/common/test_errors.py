from memory_infer.common.errors import close_match


def test_close_match_suggests_the_nearest_known_spelling():
    assert close_match("lable", ["label", "kind"]) == " (did you mean 'label'?)"
    assert close_match("et", ["ET", "CE"]) == " (did you mean 'ET'?)"  # case aside
    assert close_match("XX", ["H1", "L1"]) == ""

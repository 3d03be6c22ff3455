"""Range-error messages name every offending node, and ``failing_nodes`` reads them back."""

import numpy as np
import pytest

from bypassopt.components.validation import InputRangeError, check_range, failing_nodes, first_bad_node


def test_first_bad_node_names_every_offending_node():
    bad = np.array([False, True, False, True, True])
    i, text = first_bad_node(bad)
    assert i == 1 and text == " at node 1 (also at nodes 3, 4)"
    assert failing_nodes(f"x = 2{text} is outside") == [1, 3, 4]


def test_single_element_and_single_failure():
    assert first_bad_node(np.array([True])) == (0, "")
    assert first_bad_node(np.array([False, False, True])) == (2, " at node 2")


def test_check_range_message_round_trip():
    """A vectorized caller can set aside exactly the nodes a range error names."""
    values = np.array([1.0, 5.0, 2.0, 7.0])
    with pytest.raises(InputRangeError) as err:
        check_range("x", values, 0.0, 3.0)
    assert failing_nodes(str(err.value)) == [1, 3]

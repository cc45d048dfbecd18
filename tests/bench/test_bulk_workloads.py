"""3D benchmark workloads: registered, and both engines agree on them (kwant as reference)."""

from simsurface import bench as benchmark


def test_bulk_workloads_are_registered_with_their_sizes():
    case = benchmark.get_workload("bulk-20x20").build(n_slices=1, n_points=1)
    assert case.make_chain(0).size == 4 * 20 * 20
    assert benchmark.get_workload("bulk-quick").build(n_points=2).point_labels == ("flux_quanta=0.000",
                                                                                  "flux_quanta=1.000")


def test_quick_bulk_workload_slice_engine_matches_kwant():
    res = benchmark.run_benchmark("bulk-quick", n_points=1, scaling=False, memory=False)
    assert res.points[0].transmission_kwant > 0.5  # open valence subbands: a non-trivial comparison
    assert res.max_abs_dev < 1e-8

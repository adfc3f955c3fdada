"""rigid_body_mounts: equipment on resilient mounts in six degrees of freedom (in progress)."""

../../../examples/claims-desk.knowable.yaml

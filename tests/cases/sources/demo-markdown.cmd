../../../examples/parcel-delays.knowable.yaml

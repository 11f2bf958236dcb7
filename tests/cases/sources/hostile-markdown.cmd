hostile.schema.yaml

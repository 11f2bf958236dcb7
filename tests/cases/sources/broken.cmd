broken.schema.yaml

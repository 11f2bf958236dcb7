returns.schema.yaml demand.schema.yaml

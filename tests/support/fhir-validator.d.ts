// Types for @asymmetrik/fhir-json-schema-validator (plain JS): the official FHIR R4 JSON schema behind ajv.
declare module "@asymmetrik/fhir-json-schema-validator" {
  export default class JSONSchemaValidator {
    constructor(schema?: object, ajvSettings?: object);
    /** Errors found; an empty array when the resource is valid. */
    validate(resource: unknown, verbose?: boolean): unknown[];
  }
}

// openapi-typescript, run with the TypeScript 5 it needs (the app itself builds with TypeScript 7).
export { astToString, default as openapiTS } from "openapi-typescript";

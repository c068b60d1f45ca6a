/** Types for packages that ship none (only what Fieldkiln uses). */
declare module 'gltf-validator' {
  export interface ValidationMessage {
    code: string;
    message: string;
    severity: number;
    pointer?: string;
    offset?: number;
  }
  export interface ValidationReport {
    mimeType: string;
    validatorVersion: string;
    issues: { numErrors: number; numWarnings: number; numInfos: number; numHints: number; truncated: boolean; messages: ValidationMessage[] };
    info: { version: string; extensionsUsed?: string[]; totalVertexCount: number; totalTriangleCount: number; [k: string]: unknown };
  }
  export function validateBytes(data: Uint8Array, options?: { maxIssues?: number; ignoredIssues?: string[]; uri?: string }): Promise<ValidationReport>;
  const validator: { validateBytes: typeof validateBytes; version(): string };
  export default validator;
}

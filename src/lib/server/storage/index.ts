// Attachments: derivation notes and reference data of a draft, in S3, typed from their content.
export * from './attachments';
export * from './sniff';
export { readUpload } from './upload';

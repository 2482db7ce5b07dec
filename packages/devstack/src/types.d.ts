declare module 's3rver' {
  interface S3rverOptions {
    port?: number;
    address?: string;
    directory?: string;
    silent?: boolean;
    configureBuckets?: { name: string; configs: unknown[] }[];
  }
  export default class S3rver {
    constructor(opts: S3rverOptions);
    run(): Promise<unknown>;
    close(): Promise<void>;
  }
}
declare module 'mailparser' {
  import type { Readable } from 'node:stream';
  export interface AddressObject {
    value: { address?: string; name?: string }[];
    text: string;
  }
  export interface ParsedMail {
    subject?: string;
    text?: string;
    html?: string | false;
    date?: Date;
    to?: AddressObject | AddressObject[];
    from?: AddressObject;
  }
  export function simpleParser(source: Readable | Buffer | string): Promise<ParsedMail>;
}

// The few parts of s3rver (which ships no types) that the fake uses.
declare module "s3rver" {
  type Options = {
    address?: string;
    port?: number;
    silent?: boolean;
    directory: string;
    configureBuckets?: { name: string; configs: string[] }[];
  };
  export default class S3rver {
    constructor(options: Options);
    run(): Promise<{ address: string; port: number }>;
    close(): Promise<void>;
  }
}

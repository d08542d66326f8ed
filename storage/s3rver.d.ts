/** Minimal types for s3rver 3.7.1 (it ships none): only what storage/fake-s3-server.ts uses. */
declare module 's3rver' {
  interface S3rverBucket {
    name: string;
    configs?: (string | Buffer)[];
  }
  interface S3rverOptions {
    address?: string;
    port?: number;
    silent?: boolean;
    directory?: string;
    resetOnClose?: boolean;
    allowMismatchedSignatures?: boolean;
    vhostBuckets?: boolean;
    serviceEndpoint?: string;
    configureBuckets?: S3rverBucket[];
  }
  class S3rver {
    constructor(options?: S3rverOptions);
    /** Creates the configured buckets, listens, and resolves with the bound address. */
    run(): Promise<import('node:net').AddressInfo>;
    close(): Promise<void>;
    /** Set by run(). */
    httpServer?: import('node:http').Server;
  }
  export = S3rver;
}

/** s3rver's built-in account: it accepts only the key pairs registered on it (S3RVER / S3RVER by default). */
declare module 's3rver/lib/models/account' {
  interface S3rverAccount {
    createKeyPair(accessKeyId: string, secretAccessKey: string): void;
  }
  const AWSAccount: { DUMMY_ACCOUNT: S3rverAccount };
  export = AWSAccount;
}

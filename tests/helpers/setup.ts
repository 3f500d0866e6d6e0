import fc from 'fast-check';

// Property tests draw from a fixed seed so a CI run is repeatable; FC_SEED picks another one
// (a failure prints the seed and path to replay it).
fc.configureGlobal({ seed: Number(process.env.FC_SEED ?? 20261202) });

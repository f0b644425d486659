declare module "autocannon";

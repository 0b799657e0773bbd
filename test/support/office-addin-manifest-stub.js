// office-addin-mock imports office-addin-manifest, whose ES-module dependencies fail to load under
// Jest 30 on Node 20. The mock never uses it in our tests, so an empty module stands in.
module.exports = {};

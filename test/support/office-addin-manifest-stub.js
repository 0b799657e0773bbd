// office-addin-mock imports office-addin-manifest, whose ES-module dependencies fail to load under
// Jest 30 on Node 20. The mock uses one thing from it: the OfficeApp enum (host names such as
// "excel"), to recognise the `host` of a mock object. That enum lives in a module of its own with no
// imports, so it is taken from the installed package itself: the values cannot drift from the real ones.
"use strict";
const { OfficeApp } = require("office-addin-manifest/lib/officeApp");

module.exports = { OfficeApp };

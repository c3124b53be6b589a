/*
 * A stand-in for the one part of Office.js the custom functions touch: the CustomFunctions host
 * object (associate, Error, ErrorCode). Only the host is stubbed; the network (fetch to the
 * real steamcell server, CORS, preflight) is the browser's own.
 */
(function () {
  "use strict";
  function HostError(code, message) {
    this.code = code;
    this.message = message;
  }
  window.CustomFunctions = {
    associated: {},
    associate: function (id, fn) { this.associated[id] = fn; },
    Error: HostError,
    ErrorCode: {
      invalidValue: "#VALUE!", notAvailable: "#N/A", divisionByZero: "#DIV/0!",
      invalidNumber: "#NUM!", nullReference: "#NULL!"
    }
  };
})();

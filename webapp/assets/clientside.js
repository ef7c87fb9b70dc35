/* Browser-side helpers of the phasekit app: size check of uploads before they are sent,
   reading the inputs kept in this browser, and figure downloads through plotly itself. */
window.dash_clientside = Object.assign({}, window.dash_clientside, {
    phasekit: {
        // the same limit as webapp/uploads.py MAX_UPLOAD_BYTES
        MAX_UPLOAD_BYTES: 2 * 1024 * 1024,

        checkUpload: function (contents, filename) {
            if (!contents) { return window.dash_clientside.no_update; }
            var comma = contents.indexOf(',');
            var size = Math.floor((contents.length - comma - 1) * 3 / 4);
            var limit = window.dash_clientside.phasekit.MAX_UPLOAD_BYTES;
            if (size > limit) {
                return {error: "upload '" + filename + "': " + (size / 1e6).toFixed(1) +
                        " MB, larger than the limit of " + (limit / 1048576) + " MB", filename: filename,
                        t: Date.now()};
            }
            return {contents: contents, filename: filename, t: Date.now()};
        },

        readSavedInputs: function (boot) {
            try {
                var raw = window.localStorage.getItem('pk-inputs');
                if (raw) {
                    var data = JSON.parse(raw);
                    if (data && typeof data === 'object') { return {source: 'browser', inputs: data, boot: true}; }
                }
            } catch (e) { /* unreadable: start with the demo */ }
            return {source: 'demo', boot: true};
        },

        // every input, as typed, into the store kept in this browser (in the browser, so that the
        // store follows the fields in the order they change); the same shape as webapp/session.py
        collectInputs: function (system, tempText, coords, basis, name, units, density, ions, vals, balanceOn,
                                 analyses, process, mode, start, end, scale, tmin, tmax, pbasis,
                                 dbChoice, dbUpload, cNaNO3, cKCl, cNaCl, cKNO3, cHot, cCold, cDilution,
                                 cHotSolid, cColdSolid, cExclude, pnames, ptemps, pends, pvalues, pathExclude,
                                 pondExclude) {
            var keep = analyses && JSON.stringify(analyses).length <= 1500000 ? analyses : null;
            var rows = ions.map(function (ion, i) { return {ion: ion || '', value: vals[i] || ''}; });
            var ponds = pnames.map(function (n, i) {
                return {name: n || '', temp_c: ptemps[i] || '', end: pends[i], value: pvalues[i] || ''};
            });
            return {
                format: 'phasekit-session', version: 1, system: system, temp_c: tempText, coordinates: coords,
                basis: basis,
                brine: {name: name || '', units: units, density: density || '', balance_on: balanceOn, rows: rows},
                analyses: keep,
                path: {process: process, mode: mode, start_c: start || '', end_c: end || '', scale: scale,
                       exclude: pathExclude || ''},
                polytherm: {t_min_c: tmin || '', t_max_c: tmax || '', basis: pbasis},
                ponds: ponds,
                ponds_exclude: pondExclude || '',
                // the conversion view's fields, as typed (webapp/session.py CONVERSION_KEYS)
                conversion: {NaNO3: cNaNO3 || '', KCl: cKCl || '', NaCl: cNaCl || '', KNO3: cKNO3 || '',
                             hot_c: cHot || '', cold_c: cCold || '', dilution: cDilution || '',
                             hot_solid: cHotSolid || '', cold_solid: cColdSolid || '', exclude: cExclude || ''},
                // the database chosen; an uploaded overlay is kept with its text (at most 64 kB)
                database: {choice: dbChoice, upload: dbChoice === 'upload' ? (dbUpload || null) : null}
            };
        },

        demoRequest: function (n) {
            if (!n) { return window.dash_clientside.no_update; }
            return {source: 'demo', t: Date.now()};
        },

        downloadFigure: function (clicks) {
            var cc = window.dash_clientside.callback_context;
            if (!cc || !cc.triggered || !cc.triggered.length || !cc.triggered[0].value) {
                return window.dash_clientside.no_update;
            }
            var propId = cc.triggered[0].prop_id;
            var id = JSON.parse(propId.slice(0, propId.lastIndexOf('.')));
            var gd = document.querySelector('#' + id.graph + ' .js-plotly-plot');
            if (gd && window.Plotly) {
                window.Plotly.downloadImage(gd, {format: id.fmt, filename: 'phasekit-' + id.graph,
                                                 width: 1100, height: 700, scale: id.fmt === 'png' ? 2 : 1});
            }
            return Date.now();
        }
    }
});

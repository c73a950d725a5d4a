// neve serve, the site form: the map that sets the coordinates, and the roof-part rows.
// Text from the server is written with textContent only, never as HTML.
(function () {
  "use strict";
  var at = document.getElementById("at");
  var box = document.getElementById("pick-map");
  if (box && window.L) {
    var map = L.map(box, { zoomControl: true, attributionControl: true });
    map.setView([47.5, -140.0], 9);
    if (box.dataset.tiles === "yes") {
      var tiles = L.tileLayer("/tiles/{z}/{x}/{y}.png", {
        minZoom: 0, maxNativeZoom: Number(box.dataset.maxzoom), maxZoom: 18,
        minNativeZoom: Number(box.dataset.minzoom)
      });
      tiles.getAttribution = function () { return ""; };
      tiles.addTo(map);
      if (box.dataset.attribution) {
        map.attributionControl.addAttribution(
          document.createTextNode(box.dataset.attribution).textContent
            .replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;"));
      }
    }
    var marker = null;
    function put(lat, lon) {
      if (marker) { marker.setLatLng([lat, lon]); }
      else { marker = L.circleMarker([lat, lon], { radius: 7, color: "#1b1f3b", weight: 3, fillColor: "#ffffff", fillOpacity: 1 }).addTo(map); }
    }
    if (box.dataset.zones === "yes") {
      fetch("/map/zones.geojson", { credentials: "same-origin" })
        .then(function (r) { return r.ok ? r.json() : null; })
        .then(function (data) {
          if (!data || !data.features || !data.features.length) { return; }
          var layer = L.geoJSON(data, {
            style: { color: "#1c5d99", weight: 1, fillOpacity: 0.06 },
            onEachFeature: function (f, l) {
              var tip = document.createElement("span");
              tip.className = "zone-tip";
              tip.textContent = "zone " + String(f.properties.zone_id) + " (" + String(f.properties.layer) + ")";
              l.bindTooltip(tip, { sticky: true });
              l.on("click", function (e) { pick(e.latlng); });
            }
          }).addTo(map);
          if (!at.value) { map.fitBounds(layer.getBounds()); }
        })
        .catch(function () { /* the map still takes clicks */ });
    }
    function pick(latlng) {
      var lat = latlng.lat.toFixed(6), lon = latlng.lng.toFixed(6);
      at.value = lat + "," + lon;
      var address = document.getElementById("address");
      if (address) { address.value = ""; }
      put(latlng.lat, latlng.lng);
    }
    map.on("click", function (e) { pick(e.latlng); });
    var m = /^\s*(-?\d+(?:\.\d+)?)\s*,\s*(-?\d+(?:\.\d+)?)\s*$/.exec(at.value || "");
    if (m) { put(Number(m[1]), Number(m[2])); map.setView([Number(m[1]), Number(m[2])], 11); }
    window.nevePickMap = map;
  }
  // roof parts: add and remove rows; names are renumbered part-N-key
  function renumber(container) {
    var part = container.dataset.part;
    Array.prototype.forEach.call(container.querySelectorAll("fieldset.part"), function (fs, i) {
      fs.querySelector(".index").textContent = String(i + 1);
      Array.prototype.forEach.call(fs.querySelectorAll("input[data-key]"), function (input) {
        input.name = part + "-" + i + "-" + input.dataset.key;
      });
    });
  }
  Array.prototype.forEach.call(document.querySelectorAll("button.add-row"), function (button) {
    button.addEventListener("click", function () {
      var part = button.dataset.part;
      var template = document.getElementById(part + "-template");
      var container = document.getElementById(part + "-rows");
      var row = template.content.firstElementChild.cloneNode(true);
      Array.prototype.forEach.call(row.querySelectorAll("input"), function (i) { i.value = ""; });
      container.appendChild(row);
      renumber(container);
    });
  });
  document.addEventListener("click", function (e) {
    if (e.target.classList && e.target.classList.contains("remove-row")) {
      var fs = e.target.closest("fieldset.part");
      var container = fs.parentNode;
      fs.remove();
      renumber(container);
    }
  });
})();
